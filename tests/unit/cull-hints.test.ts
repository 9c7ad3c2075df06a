import { describe, expect, it } from 'vitest';
import {
  CLIPPED_SHARE_LIMIT,
  EXPOSURE_OUTLIER_STOPS,
  NEAR_DUPLICATE_MAX_HAMMING,
  SOFT_SHARPNESS_FRACTION,
  computeCullHints,
  describeClipped,
  describeExposureOutlier,
  framesPerMinute,
  hammingDistance,
  median,
  mostCommon,
  nearDuplicateGroups,
  prefillCamera,
  valueCounts,
  type CullFrame,
} from '@/lib/cull-hints';

// Thresholds are Fillcard's own choice (common practice, no published source); the tests below
// check that each is applied as stated, with inputs whose answers are worked out by hand.

const frame = (id: string, over: Partial<CullFrame> = {}): CullFrame => ({
  id,
  ev100: null,
  meanLuminance: null,
  clippedShare: null,
  sharpness: null,
  phash: null,
  ...over,
});

describe('the thresholds as stated', () => {
  it('are 1 stop, 2 %, 0.35 × median and 10 bits', () => {
    expect([EXPOSURE_OUTLIER_STOPS, CLIPPED_SHARE_LIMIT, SOFT_SHARPNESS_FRACTION, NEAR_DUPLICATE_MAX_HAMMING]).toEqual([1, 0.02, 0.35, 10]);
  });
});

describe('computeCullHints on a hand-built shoot', () => {
  // EV:        a 12, b 12, c 13, d 12, e 11        → sorted 11 12 12 12 13, median 12.
  //            c is +1 (on the limit, flagged), e is −1 (flagged), the rest 0.
  // Luminance: a .18, b .18, c .09, d .18, e .5    → sorted .09 .18 .18 .18 .5, median .18.
  //            c: log2(.09/.18) = −1 (flagged); e: log2(.5/.18) = log2 2.78 = 1.47 (flagged).
  // Clipped:   b .0199 (under 2 %), c .02 (on the limit, flagged), e .3 (flagged).
  // Sharpness: a 10, b 9, c 2, d 8, e 12           → median 9, limit 0.35 × 9 = 3.15; c (2) is soft.
  //            d at 8 is well above the limit.
  // Hashes:    a 0…0; b 0…03ff (10 bits from a, on the limit); d 0…0fff (12 from a, 2 from b);
  //            c f…f (64 from a); e f…f0 (4 from c). Groups: [a, b, d] through b, and [c, e].
  const frames: CullFrame[] = [
    frame('a', { ev100: 12, meanLuminance: 0.18, clippedShare: 0, sharpness: 10, phash: '0000000000000000' }),
    frame('b', { ev100: 12, meanLuminance: 0.18, clippedShare: 0.0199, sharpness: 9, phash: '00000000000003ff' }),
    frame('c', { ev100: 13, meanLuminance: 0.09, clippedShare: 0.02, sharpness: 2, phash: 'ffffffffffffffff' }),
    frame('d', { ev100: 12, meanLuminance: 0.18, clippedShare: 0.001, sharpness: 8, phash: '0000000000000fff' }),
    frame('e', { ev100: 11, meanLuminance: 0.5, clippedShare: 0.3, sharpness: 12, phash: 'fffffffffffffff0' }),
  ];
  const hints = computeCullHints(frames);

  it('flags c and e as exposure outliers, by settings and by brightness', () => {
    expect(hints.exposureOutliers.map((o) => o.id)).toEqual(['c', 'e']);
    const [c, e] = hints.exposureOutliers;
    expect(c!.evDelta).toBeCloseTo(1, 12);
    expect(c!.brightnessDeltaStops).toBeCloseTo(-1, 12);
    expect(e!.evDelta).toBeCloseTo(-1, 12);
    expect(e!.brightnessDeltaStops).toBeCloseTo(Math.log2(0.5 / 0.18), 12);
    expect(e!.brightnessDeltaStops).toBeCloseTo(1.474, 3);
  });

  it('flags c and e as clipped, not b just under 2 %', () => {
    expect(hints.clipped).toEqual(['c', 'e']);
  });

  it('flags c as soft', () => {
    expect(hints.soft).toEqual(['c']);
  });

  it('groups near-duplicates transitively', () => {
    expect(hints.nearDuplicateGroups).toEqual([
      ['a', 'b', 'd'],
      ['c', 'e'],
    ]);
  });

  it('words each hint plainly', () => {
    expect(describeExposureOutlier({ id: 'x', brightnessDeltaStops: -1.3 })).toBe("1.3 stops darker than the shoot's middle frame");
    expect(describeExposureOutlier(hints.exposureOutliers[0]!)).toBe(
      "1.0 stop darker than the shoot's middle frame; settings let in 1.0 stop less light than the shoot's usual",
    );
    expect(describeExposureOutlier({ id: 'x', evDelta: -2 })).toBe("Settings let in 2.0 stops more light than the shoot's usual");
    expect(describeClipped(0.04)).toBe('4% of pixels clipped');
    expect(describeClipped(0.025)).toBe('2.5% of pixels clipped');
  });
});

describe('missing measurements', () => {
  it('are skipped, not treated as zero', () => {
    // Only one frame has each measurement, so each median is that frame's own value: no outliers.
    const hints = computeCullHints([
      frame('a', { ev100: 10 }),
      frame('b', { meanLuminance: 0.2 }),
      frame('c', { sharpness: 5 }),
      frame('d', { phash: 'not-a-hash' }),
      frame('e', { phash: '0000000000000000' }),
    ]);
    expect(hints).toEqual({ exposureOutliers: [], clipped: [], soft: [], nearDuplicateGroups: [] });
  });

  it('an empty shoot has no hints', () => {
    expect(computeCullHints([])).toEqual({ exposureOutliers: [], clipped: [], soft: [], nearDuplicateGroups: [] });
  });

  it('an even count takes the mean of the middle two as median', () => {
    // 1 2 3 10 → (2 + 3) / 2 = 2.5
    expect(median([10, 1, 3, 2])).toBe(2.5);
    expect(median([])).toBeNull();
  });

  it('a frame a bit under one stop is not an outlier', () => {
    // Median of 10, 10, 10.9 is 10; 10.9 is 0.9 stops off.
    const hints = computeCullHints([frame('a', { ev100: 10 }), frame('b', { ev100: 10 }), frame('c', { ev100: 10.9 })]);
    expect(hints.exposureOutliers).toEqual([]);
  });
});

describe('hammingDistance', () => {
  it('counts differing bits in both 32-bit halves', () => {
    expect(hammingDistance('0000000000000000', '0000000000000000')).toBe(0);
    expect(hammingDistance('ff00000000000000', '0000000000000000')).toBe(8); // high half only
    expect(hammingDistance('00000000000000ff', '0000000000000000')).toBe(8); // low half only
    expect(hammingDistance('ffffffffffffffff', '0000000000000000')).toBe(64);
    expect(hammingDistance('8000000000000001', '0000000000000000')).toBe(2); // top and bottom bits
    expect(hammingDistance('FFFF000000000000', 'ffff000000000000')).toBe(0); // case does not matter
    expect(hammingDistance('abc', '0000000000000000')).toBeNull();
  });

  it('11 bits apart is not a near-duplicate, 10 is', () => {
    // 0x7ff has 11 bits set, 0x3ff has 10.
    expect(nearDuplicateGroups([frame('a', { phash: '0000000000000000' }), frame('b', { phash: '00000000000007ff' })])).toEqual([]);
    expect(nearDuplicateGroups([frame('a', { phash: '0000000000000000' }), frame('b', { phash: '00000000000003ff' })])).toEqual([['a', 'b']]);
  });
});

describe('mostCommon and tallies', () => {
  it('finds the most common shutter, ignoring missing values', () => {
    expect(mostCommon([1 / 250, null, 1 / 250, 1 / 125, undefined])).toBe(1 / 250);
    expect(mostCommon([null, undefined])).toBeUndefined();
  });

  it('on a tie keeps the value seen first', () => {
    // 5.6 and 8 both occur twice; 5.6 came first.
    expect(mostCommon([5.6, 8, 8, 5.6])).toBe(5.6);
  });

  it('counts values, smallest first', () => {
    expect(valueCounts([200, 100, 100, null, 400])).toEqual([
      { value: 100, count: 2 },
      { value: 200, count: 1 },
      { value: 400, count: 1 },
    ]);
  });

  it('prefills the camera from the most common of each setting', () => {
    // Shutter 1/200 twice, f/8 twice, ISO 100 twice; focal lengths 85, 85, 50 → 85.
    const camera = prefillCamera([
      { exposureTimeS: 1 / 200, fNumber: 8, iso: 100, focalLengthMm: 85 },
      { exposureTimeS: 1 / 200, fNumber: 8, iso: 200, focalLengthMm: 85 },
      { exposureTimeS: 1 / 160, fNumber: 5.6, iso: 100, focalLengthMm: 50 },
    ]);
    expect(camera).toEqual({ shutterS: 1 / 200, fNumber: 8, iso: 100, focalLengthMm: 85 });
    expect(prefillCamera([{ exposureTimeS: null, fNumber: null, iso: null, focalLengthMm: null }])).toBeNull();
  });
});

describe('framesPerMinute', () => {
  it('counts by the wall-clock minute written in each stamp and fills the gaps', () => {
    // 14:03 twice (ISO form), 14:05 once (EXIF form), nothing at 14:04, two unreadable stamps.
    expect(
      framesPerMinute(['2031-05-01T14:03:22+02:00', '2031-05-01T14:03:50+02:00', '2031:05:01 14:05:01', null, 'later']),
    ).toEqual([
      { minute: '2031-05-01T14:03', label: '14:03', count: 2 },
      { minute: '2031-05-01T14:04', label: '14:04', count: 0 },
      { minute: '2031-05-01T14:05', label: '14:05', count: 1 },
    ]);
  });

  it('labels with the date across midnight, and leaves long gaps out', () => {
    // 23:59 to 00:01 next day is 2 minutes: filled. 1 May to 3 May is far beyond 240 minutes: not filled.
    expect(framesPerMinute(['2031-05-01T23:59:00', '2031-05-02T00:01:00']).map((m) => m.label)).toEqual([
      '2031-05-01 23:59',
      '2031-05-02 00:00',
      '2031-05-02 00:01',
    ]);
    expect(framesPerMinute(['2031-05-01T10:00:00', '2031-05-03T10:00:00'])).toHaveLength(2);
    expect(framesPerMinute([])).toEqual([]);
  });
});
