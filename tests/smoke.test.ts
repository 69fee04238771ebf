import { describe, expect, it } from 'vitest';
import { createRng, VERSION } from '@rhofield/core';

describe('createRng(seed)', () => {
  it('is deterministic per seed and uniform on [0,1) (mean 0.5 ± 0.01 over 1e5 draws; law of large numbers)', () => {
    const a = createRng(7);
    const b = createRng(7);
    let s = 0;
    for (let i = 0; i < 100_000; i++) {
      const u = a.next();
      expect(u).toBe(b.next());
      s += u;
    }
    expect(Math.abs(s / 1e5 - 0.5)).toBeLessThan(0.01);
  });
  it('normal() has unit variance (1 ± 0.02 over 1e5 draws)', () => {
    const r = createRng(3);
    let s2 = 0;
    for (let i = 0; i < 100_000; i++) s2 += r.normal() ** 2;
    expect(Math.abs(s2 / 1e5 - 1)).toBeLessThan(0.02);
  });
  it('VERSION is semver', () => expect(VERSION).toMatch(/^\d+\.\d+\.\d+$/));
});
