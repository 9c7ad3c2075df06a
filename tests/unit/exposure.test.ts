import { describe, expect, it } from 'vitest';
import {
  apertureValue,
  ev100,
  evAtIso,
  formatAperture,
  formatExposureBias,
  formatShutter,
  speedValue,
  timeValue,
} from '../../src/lib/exposure';

// Nominal f-numbers and shutter times are rounded markings, so the published EVs hold to ±0.05.
const TOLERANCE = 0.05;

describe("EV at ISO 100 against the APEX table (CIPA DC-008 APEX annex / Wikipedia 'Exposure value')", () => {
  const table: Array<[number, number, number]> = [
    [1, 1, 0],
    [2, 1 / 4, 4],
    [2.8, 1 / 60, 8.878],
    [5.6, 1 / 125, 11.937],
    [5.6, 1 / 250, 12.937],
    [8, 1 / 250, 13.966],
    [16, 1 / 125, 14.966],
  ];
  for (const [n, t, ev] of table) {
    it(`f/${n} at ${t} s is EV ${ev}`, () => {
      expect(Math.abs(ev100(n, t) - ev)).toBeLessThanOrEqual(TOLERANCE);
    });
  }

  it("practitioner's account of a small-studio flash portrait: 1/250 s, f/5.6, ISO 100 is EV 12.94", () => {
    expect(Math.abs(evAtIso(5.6, 1 / 250, 100) - 12.94)).toBeLessThanOrEqual(TOLERANCE);
  });
});

describe('APEX terms (CIPA DC-008 APEX annex: Av = 2·log2 N, Tv = −log2 t, Sv = log2(ISO/3.125))', () => {
  it('Sv is 5 at ISO 100 and rises one per doubling', () => {
    expect(speedValue(100)).toBeCloseTo(5, 10);
    expect(speedValue(200) - speedValue(100)).toBeCloseTo(1, 10);
  });
  it('Av of f/1 is 0 and Tv of 1 s is 0, so EV = Av + Tv', () => {
    expect(apertureValue(1)).toBe(0);
    expect(timeValue(1)).toBe(-0);
    expect(ev100(4, 1 / 30)).toBeCloseTo(apertureValue(4) + timeValue(1 / 30), 12);
  });
  it('restating at a higher ISO lowers the EV by the stops of gain', () => {
    // Two doublings of ISO (100 → 400) are two stops: the scene gave two stops less light.
    expect(ev100(5.6, 1 / 250) - evAtIso(5.6, 1 / 250, 400)).toBeCloseTo(2, 10);
    expect(evAtIso(5.6, 1 / 250, 50)).toBeCloseTo(ev100(5.6, 1 / 250) + 1, 10);
  });
  it('refuses settings that cannot be real', () => {
    expect(() => ev100(0, 1 / 250)).toThrow(RangeError);
    expect(() => ev100(5.6, -1)).toThrow(RangeError);
    expect(() => evAtIso(5.6, 1 / 250, Number.NaN)).toThrow(RangeError);
  });
});

describe('plain-word settings', () => {
  it('shutter times read as a photographer writes them', () => {
    expect(formatShutter(1 / 250)).toBe('1/250 s');
    expect(formatShutter(0.004)).toBe('1/250 s');
    expect(formatShutter(1 / 8000)).toBe('1/8000 s');
    expect(formatShutter(1 / 3)).toBe('1/3 s');
    expect(formatShutter(0.3)).toBe('0.3 s');
    expect(formatShutter(0.5)).toBe('0.5 s');
    expect(formatShutter(2)).toBe('2 s');
    expect(formatShutter(1.3)).toBe('1.3 s');
    expect(formatShutter(30)).toBe('30 s');
  });
  it('apertures as lenses mark them', () => {
    expect(formatAperture(5.6)).toBe('f/5.6');
    expect(formatAperture(8)).toBe('f/8');
    expect(formatAperture(1.4)).toBe('f/1.4');
    expect(formatAperture(11)).toBe('f/11');
    expect(formatAperture(5.599999)).toBe('f/5.6');
  });
  it('exposure compensation with its sign', () => {
    expect(formatExposureBias(-0.7)).toBe('−0.7 EV');
    expect(formatExposureBias(1)).toBe('+1 EV');
    expect(formatExposureBias(0)).toBe('0 EV');
  });
  it('refuses nonsense instead of printing it', () => {
    expect(() => formatShutter(0)).toThrow(RangeError);
    expect(() => formatAperture(Number.NaN)).toThrow(RangeError);
  });
});
