import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadSetup, parseSetup, RhofieldError } from '@rhofield/core';

const good = () => ({
  camera: { focalLength: 0.105, fNumber: 11, pixelPitch: 6.5e-6, sensorPx: [2560, 2160] },
  geometry: { lensToBackground: 2.4, flowToBackground: 0.9, originPx: [1279.5, 1079.5] },
  medium: { gas: 'air', wavelength: 5.3e-7, referenceDensity: 1.18, pressure: 101325 } as Record<string, unknown>,
  flow: { type: 'planar', span: 0.08, reference: 'top' } as Record<string, unknown>,
  expected: { densityChange: -0.05, lengthScale: 0.01 } as Record<string, unknown>,
});
type S = ReturnType<typeof good> & Record<string, unknown>;
const fails = (mut: (s: S) => void): string => {
  const s = good() as S;
  mut(s);
  try {
    parseSetup(s, 'rig.json');
  } catch (e) {
    expect(e).toBeInstanceOf(RhofieldError);
    return (e as Error).message;
  }
  throw new Error('expected parseSetup to throw');
};

describe('parseSetup(json, source)', () => {
  it('accepts the docs/setup.md-style example and the axisymmetric and mixture variants', () => {
    expect(parseSetup(good()).medium.gas).toBe('air');
    const a = good();
    a.flow = { type: 'axisymmetric', axis: 'vertical', axisPosition: 'auto' };
    expect(parseSetup(a).flow.type).toBe('axisymmetric');
    const m = good();
    m.medium = { mixture: { N2: 0.77, O2: 0.23 }, wavelength: 5.3e-7, referenceDensity: 1.2 };
    expect(parseSetup(m).medium.mixture).toEqual({ N2: 0.77, O2: 0.23 });
  });
  it('unknown keys name the key path', () => {
    expect(fails((s) => ((s.medium as Record<string, unknown>).temperatur = 300))).toBe(
      'expected only known keys in medium for rig.json: medium.temperatur but received the unknown key "temperatur"; remove it or check its spelling (keys are case-sensitive)',
    );
    expect(fails((s) => (s.extra = 1))).toMatch(/rig\.json: extra but received the unknown key "extra"/);
  });
  it('missing keys', () => {
    expect(fails((s) => delete (s.geometry as Partial<typeof s.geometry>).lensToBackground)).toMatch(/for rig\.json: geometry\.lensToBackground but received nothing \(the key is missing\)/);
  });
  it('zero or negative distances', () => {
    expect(fails((s) => (s.geometry.flowToBackground = -0.1))).toMatch(/expected a positive flow-to-background distance in metres for rig\.json: geometry\.flowToBackground but received -0\.1/);
    expect(fails((s) => (s.camera.focalLength = 0))).toMatch(/camera\.focalLength but received 0$/);
    expect(fails((s) => (s.flow.span = 0))).toMatch(/flow\.span but received 0$/);
  });
  it('flowToBackground ≥ lensToBackground and lensToBackground ≤ focalLength', () => {
    expect(fails((s) => (s.geometry.flowToBackground = 2.4))).toMatch(/expected a distance smaller than geometry\.lensToBackground \(2\.4 m\) for rig\.json: geometry\.flowToBackground but received 2\.4/);
    expect(fails((s) => (s.geometry.lensToBackground = 0.1))).toMatch(/larger than camera\.focalLength .* but received 0\.1/);
  });
  it('wavelength outside 200 nm – 2 µm (e.g. given in nm)', () => {
    expect(fails((s) => (s.medium.wavelength = 532))).toMatch(/between 2e-7 and 2e-6 .* medium\.wavelength but received 532/);
    expect(fails((s) => (s.medium.wavelength = 1.5e-7))).toMatch(/medium\.wavelength but received 1\.5e-7/);
  });
  it('unknown gas lists the known ones', () => {
    expect(fails((s) => (s.medium.gas = 'argon'))).toMatch(/one of air, N2, O2, Ar, CO2.* for rig\.json: medium\.gas but received "argon"/);
    expect(fails((s) => { delete s.medium.gas; s.medium.mixture = { N2: 0.5, Xe: 0.5 }; })).toMatch(/medium\.mixture\.Xe/);
  });
  it('medium needs exactly one of gas / gladstoneDale / mixture; fractions sum to 1 ± 1e-6', () => {
    expect(fails((s) => (s.medium.gladstoneDale = 2.3e-4))).toMatch(/exactly one of gas, gladstoneDale or mixture for rig\.json: medium but received gas and gladstoneDale/);
    expect(fails((s) => delete s.medium.gas)).toMatch(/received none of them/);
    expect(fails((s) => { delete s.medium.gas; s.medium.mixture = { N2: 0.7, O2: 0.2 }; })).toMatch(/summing to 1 .* received fractions summing to 0\.9/);
  });
  it('flow variants are checked', () => {
    expect(fails((s) => (s.flow.reference = 'middle'))).toMatch(/flow\.reference but received "middle"/);
    expect(fails((s) => (s.flow = { type: 'radial' }))).toMatch(/flow\.type but received "radial"/);
    expect(fails((s) => (s.flow = { type: 'axisymmetric', axis: 'vertical', axisPosition: -3 }))).toMatch(/flow\.axisPosition but received -3/);
    expect(fails((s) => (s.flow.reference = { rectPx: [10, 10, 5, 20] }))).toMatch(/x1 > x0 .* flow\.reference\.rectPx/);
  });
  it('expected needs exactly one of densityChange / temperatureChange', () => {
    expect(fails((s) => (s.expected.temperatureChange = 30))).toMatch(/exactly one of densityChange or temperatureChange for rig\.json: expected but received both/);
  });
});

describe('loadSetup(path)', () => {
  const dir = mkdtempSync(path.join(tmpdir(), 'rhofield-setup-'));
  it('reads a valid file', () => {
    const f = path.join(dir, 'ok.json');
    writeFileSync(f, JSON.stringify(good(), null, 2));
    expect(loadSetup(f).flow.type).toBe('planar');
  });
  it('names the missing file', () => {
    expect(() => loadSetup(path.join(dir, 'nope.json'))).toThrow(/cannot read setup file .*nope\.json: no such file/);
  });
  it('gives line and column of a JSON syntax error', () => {
    const f = path.join(dir, 'bad.json');
    writeFileSync(f, '{\n  "camera": {\n    "focalLength": 0.1,\n  }\n}\n');
    expect(() => loadSetup(f)).toThrow(/bad\.json is not valid JSON at line 4, column 3/);
  });
  it('validation errors name the file', () => {
    const f = path.join(dir, 'neg.json');
    const s = good();
    s.geometry.flowToBackground = -1;
    writeFileSync(f, JSON.stringify(s));
    expect(() => loadSetup(f)).toThrow(/neg\.json: geometry\.flowToBackground but received -1/);
  });
});
