import { describe, expect, it } from 'vitest';
import {
  cameraEv100,
  distanceForStops,
  distanceStops,
  distanceToSubject,
  formatPower,
  formatRatio,
  formatStops,
  guideNumberAtPower,
  guideNumberDistance,
  keyToFillFromNotes,
  keyToFillRatio,
  lightNotesSchema,
  nearestPowerSetting,
  powerForStops,
  powerStops,
  sourceStopsRelativeToKey,
  type LightNotes,
} from '@/lib/light';

const FEET = 0.3048;
const INCH = 0.0254;

describe('inverse-square falloff (Wikipedia "Inverse-square law")', () => {
  it('doubling the distance loses 2 stops', () => {
    expect(distanceStops(1, 2)).toBeCloseTo(-2, 10);
    expect(distanceStops(3, 6)).toBeCloseTo(-2, 10);
  });

  it('multiplying the distance by √2 loses 1 stop', () => {
    expect(distanceStops(1, Math.SQRT2)).toBeCloseTo(-1, 10);
  });

  it('halving the distance gains 2 stops', () => {
    expect(distanceStops(2, 1)).toBeCloseTo(2, 10);
  });

  it('distanceForStops undoes distanceStops', () => {
    // Wikipedia "Inverse-square law": one stop less light means √2 times the distance.
    expect(distanceForStops(1, -1)).toBeCloseTo(Math.SQRT2, 10);
    expect(distanceForStops(2, 2)).toBeCloseTo(1, 10);
    const d = distanceForStops(1.7, 0.6);
    expect(distanceStops(1.7, d)).toBeCloseTo(0.6, 10);
  });
});

describe('flash power (Wikipedia "Guide number")', () => {
  it('1/2 → 1/4 power is one stop less', () => {
    expect(powerStops(2, 4)).toBeCloseTo(-1, 10);
  });

  it('full → 1/128 is seven stops less, and back is seven more', () => {
    expect(powerStops(1, 128)).toBeCloseTo(-7, 10);
    expect(powerStops(128, 1)).toBeCloseTo(7, 10);
  });

  it('the guide number scales with √power: 1/4 power halves it', () => {
    expect(guideNumberAtPower(40, 4)).toBeCloseTo(20, 10);
    expect(guideNumberAtPower(40, 2)).toBeCloseTo(40 / Math.SQRT2, 10);
  });

  it('GN = distance × f-number at ISO 100', () => {
    expect(guideNumberDistance(32, 8)).toBeCloseTo(4, 10);
    // Quarter power: GN halves, so the same aperture reaches half as far (2 stops = ×2 distance).
    const full = guideNumberDistance(32, 8);
    const quarter = guideNumberDistance(guideNumberAtPower(32, 4), 8);
    expect(distanceStops(full, quarter)).toBeCloseTo(2, 10);
  });

  it('nearestPowerSetting rounds to a real setting and flags the unreachable', () => {
    expect(nearestPowerSetting(4)).toEqual({ power: 4, isReachable: true });
    expect(nearestPowerSetting(5.2)).toEqual({ power: 4, isReachable: true }); // log2 5.2 = 2.38 → 1/4
    expect(nearestPowerSetting(0.5)).toEqual({ power: 1, isReachable: false }); // twice full power
    expect(nearestPowerSetting(256)).toEqual({ power: 128, isReachable: false });
  });
});

describe("small-studio bounce setup (practitioner's account)", () => {
  it('a key flash at 1/2 a stop too bright wants 1/4', () => {
    expect(powerForStops(2, -1)).toBeCloseTo(4, 10);
  });

  it('fill board at 14 in is 1.56 stops hotter than the key board at 2 ft, by distance alone', () => {
    expect(2 * FEET).toBeCloseTo(0.6096, 10);
    expect(14 * INCH).toBeCloseTo(0.3556, 10);
    expect(distanceStops(0.6096, 0.3556)).toBeCloseTo(1.56, 1);
    expect(Math.abs(distanceStops(0.6096, 0.3556) - 1.56)).toBeLessThanOrEqual(0.01);
  });

  it('on the plan of a 2 m × 4 m room the same distances give the same reading', () => {
    // Room about 2 m wide, 4 m deep; subject on the centre line; key board 2 ft to camera left,
    // fill board 14 in to camera right. The geometry is ours, the distances are the account's.
    const notes: LightNotes = {
      room: { widthM: 2, depthM: 4 },
      subject: { x: 1, y: 2.5 },
      sources: [
        { id: 'key', kind: 'bounce_board', label: 'Key board', x: 1 - 0.6096, y: 2.5, aimsAt: 'subject' },
        { id: 'fill', kind: 'bounce_board', label: 'Fill board', x: 1 + 0.3556, y: 2.5, aimsAt: 'subject' },
        { id: 'flash', kind: 'flash', label: 'Bounced flash', power: 4, x: 1, y: 3.5, aimsAt: 'key board' },
      ],
      keyId: 'key',
      fillId: 'fill',
    };
    expect(lightNotesSchema.safeParse(notes).success).toBe(true);
    const readings = sourceStopsRelativeToKey(notes);
    expect(readings[0]).toMatchObject({ id: 'key', stopsRelativeToKey: 0 });
    expect(readings[0]!.distanceM).toBeCloseTo(0.6096, 10);
    expect(readings[1]!.stopsRelativeToKey).toBeCloseTo(1.555, 2);
    const kf = keyToFillFromNotes(notes);
    expect(kf).not.toBeNull();
    // The fill outshines the key here, so key-to-fill is negative and the ratio reads 1:x.
    expect(kf!.stops).toBeCloseTo(-1.555, 2);
    expect(formatRatio(kf!.ratio)).toBe('1:2.94');
  });
});

describe('key-to-fill ratio = 2^stops (Wikipedia "Inverse-square law": one stop is a factor of 2)', () => {
  it('1 stop is 2:1, 2 stops 4:1, 0 stops 1:1', () => {
    expect(keyToFillRatio(1).ratio).toBeCloseTo(2, 10);
    expect(keyToFillRatio(2).ratio).toBeCloseTo(4, 10);
    expect(formatRatio(keyToFillRatio(0).ratio)).toBe('1.00:1');
  });

  it('1.56 stops reads 2.95:1', () => {
    const { stops, ratio } = keyToFillRatio(1.56);
    expect(stops).toBe(1.56);
    expect(formatRatio(ratio)).toBe('2.95:1');
  });
});

describe('sources relative to the key', () => {
  const base: LightNotes = {
    room: { widthM: 4, depthM: 5 },
    subject: { x: 2, y: 2 },
    sources: [
      { id: 'a', kind: 'flash', label: 'Key', power: 2, x: 2, y: 3, aimsAt: 'subject' }, // 1 m
      { id: 'b', kind: 'flash', label: 'Fill', power: 8, x: 2, y: 4, aimsAt: 'subject' }, // 2 m
      { id: 'c', kind: 'reflector', label: 'Silver', x: 3, y: 2, aimsAt: 'subject' }, // 1 m
      { id: 'd', kind: 'window', label: 'North window', x: 2 + Math.SQRT2, y: 2, aimsAt: 'room' }, // √2 m
    ],
    keyId: 'a',
  };

  it('adds power stops between flashes and uses distance alone otherwise', () => {
    const r = sourceStopsRelativeToKey(base);
    // b: twice as far (−2, Wikipedia "Inverse-square law") and 1/2 → 1/8 (−2, Wikipedia "Guide number").
    expect(r[1]!.stopsRelativeToKey).toBeCloseTo(-4, 10);
    // c: same distance as the key, power ignored for a reflector.
    expect(r[2]!.stopsRelativeToKey).toBeCloseTo(0, 10);
    // d: √2 times as far → −1.
    expect(r[3]!.stopsRelativeToKey).toBeCloseTo(-1, 10);
    expect(r.map((x) => x.distanceM)).toEqual([1, 2, 1, expect.closeTo(Math.SQRT2, 10)]);
  });

  it('without a chosen fill, the brightest other source is the fill', () => {
    const kf = keyToFillFromNotes(base);
    expect(kf).toMatchObject({ fillId: 'c', isFillChosen: false });
    expect(kf!.stops).toBeCloseTo(0, 10);
    const chosen = keyToFillFromNotes({ ...base, fillId: 'b' });
    expect(chosen).toMatchObject({ fillId: 'b', isFillChosen: true });
    expect(chosen!.ratio).toBeCloseTo(16, 10);
  });

  it('reads null with no key, and for a source standing on the subject', () => {
    expect(sourceStopsRelativeToKey({ ...base, keyId: undefined }).every((r) => r.stopsRelativeToKey === null)).toBe(true);
    expect(keyToFillFromNotes({ ...base, keyId: undefined })).toBeNull();
    const onSubject = { ...base, sources: [...base.sources, { id: 'e', kind: 'flash' as const, label: 'x', x: 2, y: 2, aimsAt: '' }] };
    expect(sourceStopsRelativeToKey(onSubject)[4]).toEqual({ id: 'e', distanceM: 0, stopsRelativeToKey: null });
  });

  it('distanceToSubject is the plan distance (3-4-5 triangle)', () => {
    expect(distanceToSubject({ subject: { x: 0, y: 0 } }, { x: 3, y: 4 })).toBe(5);
  });
});

describe('lightNotesSchema', () => {
  const ok: LightNotes = {
    room: { widthM: 3, depthM: 4 },
    subject: { x: 1.5, y: 2 },
    sources: [{ id: 's1', kind: 'flash', label: 'Key', power: 4, x: 0.5, y: 1, aimsAt: 'subject', modifier: 'umbrella' }],
    keyId: 's1',
    camera: { shutterS: 1 / 200, fNumber: 8, iso: 100, focalLengthMm: 85 },
    notes: 'Background 1 m behind.',
  };

  it('accepts a sane plan', () => {
    expect(lightNotesSchema.parse(ok)).toEqual(ok);
  });

  it.each([
    ['a room over 50 m', { ...ok, room: { widthM: 51, depthM: 4 } }],
    ['a power that is no setting', { ...ok, sources: [{ ...ok.sources[0]!, power: 3 }] }],
    ['power on a reflector', { ...ok, sources: [{ ...ok.sources[0]!, kind: 'reflector' }] }],
    ['a source outside the room', { ...ok, sources: [{ ...ok.sources[0]!, x: 3.5 }] }],
    ['a subject outside the room', { ...ok, subject: { x: 1, y: 4.2 } }],
    ['a key that is no source', { ...ok, keyId: 'nope' }],
    ['a label over 200 characters', { ...ok, sources: [{ ...ok.sources[0]!, label: 'x'.repeat(201) }] }],
    ['two sources with one id', { ...ok, sources: [ok.sources[0]!, ok.sources[0]!] }],
    ['25 sources', { ...ok, sources: Array.from({ length: 25 }, (_, i) => ({ ...ok.sources[0]!, id: `s${i}` })) }],
    ['a negative position', { ...ok, subject: { x: -0.1, y: 1 } }],
    ['an unknown kind', { ...ok, sources: [{ ...ok.sources[0]!, kind: 'strobe' }] }],
  ])('refuses %s', (_name, notes) => {
    expect(lightNotesSchema.safeParse(notes).success).toBe(false);
  });
});

describe('camera settings', () => {
  // APEX (CIPA DC-008 APEX annex; Wikipedia "Exposure value"): f/5.6 at 1/125 s is EV 11.937, ±0.05.
  it('cameraEv100 matches the APEX table', () => {
    expect(Math.abs(cameraEv100({ fNumber: 5.6, shutterS: 1 / 125 })! - 11.937)).toBeLessThanOrEqual(0.05);
    expect(Math.abs(cameraEv100({ fNumber: 16, shutterS: 1 / 125, iso: 400 })! - 14.966)).toBeLessThanOrEqual(0.05);
  });

  it('cameraEv100 needs both aperture and shutter', () => {
    expect(cameraEv100({ fNumber: 8 })).toBeNull();
    expect(cameraEv100(null)).toBeNull();
    expect(cameraEv100({ fNumber: 8, shutterS: 1 / 250 })).toBeCloseTo(Math.log2(64 * 250), 10);
  });

  it('formats settings plainly', () => {
    expect(formatPower(1)).toBe('Full');
    expect(formatPower(16)).toBe('1/16');
    expect(formatStops(distanceStops(0.6096, 0.3556))).toBe('+1.56 stops');
    expect(formatStops(-1)).toBe('−1.00 stop');
    expect(formatStops(0.001)).toBe('0.00 stops');
  });
});
