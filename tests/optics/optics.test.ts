import { describe, expect, it } from 'vitest';
import {
  airGladstoneDale,
  airRefractivityBirchDowns,
  airRefractivityCiddorStandard,
  airRefractivityEdlen1966Standard,
  deflectionToDisplacement,
  displacementToDeflection,
  flowPlanePixelSize,
  gasConstantOf,
  gasGladstoneDale,
  magnification,
  mediumConstants,
  pixelMapping,
} from '@rhofield/core';

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe('air refractivity (standard air, 15 °C, 101 325 Pa, dry)', () => {
  // Check values: (n−1)·10⁸ computed from the published formulas (Ciddor 1996, Appl. Opt. 35:1566;
  // modified Edlén: Birch & Downs 1993/94, Metrologia 30:155, 31:315; Edlén 1966, Metrologia 2:71); the test
  // also recomputes each formula independently (σ in µm⁻¹).
  const cases = [
    { nm: 632.99, ciddor: 27653.0, edlenMod: 27652.9, edlen66: 27651.8 },
    { nm: 532, ciddor: 27820.8, edlenMod: 27820.6, edlen66: 27819.5 },
  ];
  for (const c of cases) {
    it(`airRefractivityCiddorStandard(${c.nm} nm) = ${c.ciddor}e-8 (Ciddor 1996, Appl. Opt. 35:1566, eq. 1)`, () => {
      const s2 = (1 / (c.nm / 1000)) ** 2;
      const formula = (0.05792105 / (238.0185 - s2) + 0.00167917 / (57.362 - s2)) * 1e8;
      expect(Math.abs(formula - c.ciddor)).toBeLessThan(0.06);
      expect(Math.abs(airRefractivityCiddorStandard(c.nm * 1e-9) * 1e8 - c.ciddor)).toBeLessThan(0.06);
    });
    it(`airRefractivityBirchDowns(${c.nm} nm, 288.15 K, 101325 Pa) = ${c.edlenMod}e-8 (Birch & Downs 1993/94, Metrologia 30:155, 31:315)`, () => {
      const s2 = (1 / (c.nm / 1000)) ** 2;
      const ns = (8342.54 + 2406147 / (130 - s2) + 15998 / (38.9 - s2)) * 1e-8;
      const X = (1 + 1e-8 * (0.601 - 0.00972 * 15) * 101325) / (1 + 0.003661 * 15);
      const formula = ((101325 * ns * X) / 96095.43) * 1e8;
      expect(Math.abs(airRefractivityBirchDowns(c.nm * 1e-9, 288.15, 101325) * 1e8 - formula)).toBeLessThan(1e-6);
      expect(Math.abs(formula - c.edlenMod)).toBeLessThan(0.3);
    });
    it(`airRefractivityEdlen1966Standard(${c.nm} nm) = ${c.edlen66}e-8 (Edlén 1966, Metrologia 2:71)`, () => {
      expect(Math.abs(airRefractivityEdlen1966Standard(c.nm * 1e-9) * 1e8 - c.edlen66)).toBeLessThan(0.06);
    });
  }
  it('Ciddor and modified Edlén agree within 3e-9 in n over 450–633 nm (the formulas differ by about 1e-9 near 600 nm and 2e-9 at 450 nm; computed from the papers above)', () => {
    for (const nm of [450, 532, 589.3, 632.99]) {
      expect(Math.abs(airRefractivityCiddorStandard(nm * 1e-9) - airRefractivityBirchDowns(nm * 1e-9))).toBeLessThan(3e-9);
    }
  });
  it('modified Edlén at 0 °C, 101 325 Pa, 589 nm gives n = 1.000292 (handbook refractive-index tables, e.g. CRC Handbook)', () => {
    expect(Math.abs(airRefractivityBirchDowns(589.3e-9, 273.15, 101325) - 2.92e-4)).toBeLessThan(0.6e-6);
  });
});

describe('Gladstone–Dale constants', () => {
  it('air K(λ) within 0.05 % of Ciddor 1996 refractivity / standard-air density 1.22546 kg/m³ (computed)', () => {
    for (const [nm, k] of [[632.99, 2.2565e-4], [589.3, 2.2616e-4], [532, 2.2702e-4], [450, 2.2892e-4]] as const) {
      expect(rel(airGladstoneDale(nm * 1e-9), k)).toBeLessThan(5e-4);
    }
  });
  it('N2 and O2 within 1 % of AIAA Paper 2003-4252 (0.238e-3, 0.190e-3 m³/kg), an independent compilation', () => {
    expect(rel(gasGladstoneDale('N2', 589e-9), 0.238e-3)).toBeLessThan(0.01);
    expect(rel(gasGladstoneDale('O2', 589e-9), 0.19e-3)).toBeLessThan(0.01);
    expect(rel(gasGladstoneDale('NO', 589e-9), 0.221e-3)).toBeLessThan(0.01);
  });
  it('table values within 1 % of the handbook list (Chronological Scientific Tables 2000 refractivities / ideal-gas density)', () => {
    const list: Record<string, number> = { N2: 0.238, O2: 0.19, Ar: 0.159, CO2: 0.229, CO: 0.267, He: 0.196, H2: 1.53, Ne: 0.074, H2O: 0.313 };
    for (const [g, k] of Object.entries(list)) expect(rel(gasGladstoneDale(g, 589e-9), k * 1e-3)).toBeLessThan(0.01);
  });
  it('mixture rule: dry air by mass from its mole fractions (U.S. Standard Atmosphere 1976, Table 3: N2 0.78084, O2 0.209476, Ar 0.00934, CO2 0.000314) gives K within 0.5 % of Ciddor air at 589 nm', () => {
    const x: Record<string, number> = { N2: 0.78084, O2: 0.209476, Ar: 0.00934, CO2: 0.000314 };
    const M: Record<string, number> = { N2: 28.0134, O2: 31.9988, Ar: 39.948, CO2: 44.0095 };
    let mbar = 0;
    for (const g in x) mbar += x[g]! * M[g]!;
    const mixture: Record<string, number> = {};
    let sum = 0;
    for (const g in x) sum += mixture[g] = (x[g]! * M[g]!) / mbar;
    for (const g in mixture) mixture[g]! /= sum;
    const m = mediumConstants({ mixture, wavelength: 589.3e-9, referenceDensity: 1.2 });
    expect(rel(m.gladstoneDale, airGladstoneDale(589.3e-9))).toBeLessThan(0.005);
    // R of the mixture = R_u / M̄ (Dalton): M̄ = 28.9644 g/mol for this composition ± 0.05 %
    expect(rel(m.gasConstant!, 8.314462618 / 28.9644e-3)).toBeLessThan(5e-4);
  });
});

describe('ideal gas', () => {
  it('air at 15 °C, 101 325 Pa: ρ = p/(R T) = 1.2250 kg/m³ (ISO 2533 / U.S. Standard Atmosphere 1976)', () => {
    const rho = 101325 / (gasConstantOf('air') * 288.15);
    expect(Math.abs(rho - 1.225)).toBeLessThan(2e-4);
    // R of air 287.05287 J/(kg K) in ISO 2533 (its R* = 8.31432); CODATA 2018 R_u gives 287.058
    expect(rel(gasConstantOf('air'), 287.05287)).toBeLessThan(5e-5);
  });
});

describe('geometry (thin lens focused on the background; Raffel 2015 Exp. Fluids 56:60)', () => {
  const g = { focalLength: 0.1, pixelPitch: 5e-6, lensToBackground: 2.1, flowToBackground: 1.05 };
  it('magnification f/(Z_B − f) = 0.05 for f = 0.1 m, Z_B = 2.1 m (hand-worked)', () => {
    expect(magnification(g)).toBeCloseTo(0.05, 12);
  });
  it('flow-plane pixel size p·Z_A(Z_B − f)/(f·Z_B) = 5e-6·1.05·2/(0.1·2.1) = 50 µm (hand-worked)', () => {
    expect(flowPlanePixelSize(g)).toBeCloseTo(50e-6, 12);
  });
  it('deflection ↔ displacement: eps = −d·p/(M·Z_D); 1 px ↔ −5e-6/(0.05·1.05) rad (hand-worked)', () => {
    expect(displacementToDeflection(1, g)).toBeCloseTo(-5e-6 / 0.0525, 14);
    expect(deflectionToDisplacement(displacementToDeflection(0.37, g), g)).toBeCloseTo(0.37, 12);
  });
  it('pixelMapping: origin at the image centre, y_m up', () => {
    const m = pixelMapping(g, 101, 51);
    expect(m.xM(50)).toBe(0);
    expect(m.yM(25)).toBeCloseTo(0, 15);
    expect(m.xM(60)).toBeCloseTo(10 * 50e-6, 12);
    expect(m.yM(15)).toBeCloseTo(10 * 50e-6, 12); // 10 rows up → +y_m
    expect(m.yPx(m.yM(7.5))).toBeCloseTo(7.5, 10);
  });
});
