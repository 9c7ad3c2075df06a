import { describe, expect, it } from 'vitest';
import { cameraName, flashText, formatBytes, formatFocalLength, formatTakenAt, settingsLine } from './frame-facts';
import { parsePercent, percentText } from './percent';

describe('capture time with the camera offset', () => {
  // A UTC offset is added to UTC to give local time (ISO 8601 / RFC 3339 §4.2).
  it('shows the camera clock at +02:00 for an instant stored in UTC', () => {
    expect(formatTakenAt('2026-03-14T08:15:30.000Z', '+02:00')).toBe('14 Mar 2026, 10:15:30 (UTC+02:00)');
  });
  it('handles negative and half-hour offsets across midnight', () => {
    expect(formatTakenAt('2026-03-15T02:00:00.000Z', '-05:00')).toBe('14 Mar 2026, 21:00:00 (UTC-05:00)');
    expect(formatTakenAt('2026-03-14T20:00:00.000Z', '+05:30')).toBe('15 Mar 2026, 01:30:00 (UTC+05:30)');
  });
  it('says when no offset was recorded', () => {
    expect(formatTakenAt('2026-03-14T10:15:30.000Z', null)).toBe('14 Mar 2026, 10:15:30 (camera clock, no time zone recorded)');
    expect(formatTakenAt(null, null)).toBeNull();
  });
});

describe('lens and camera words', () => {
  it('names the 35 mm equivalent only when it differs', () => {
    expect(formatFocalLength(35, 52)).toBe('35 mm (52 mm in 35 mm terms)');
    expect(formatFocalLength(85, 85)).toBe('85 mm (full frame)');
    expect(formatFocalLength(85, null)).toBe('85 mm');
    expect(formatFocalLength(null, null)).toBeNull();
  });
  it('does not repeat the maker when the model already carries it', () => {
    expect(cameraName('Northlight Optics', 'Northlight Optics NL-7')).toBe('Northlight Optics NL-7');
    expect(cameraName('Northlight Optics', 'NL-7')).toBe('Northlight Optics NL-7');
    expect(cameraName(null, 'NL-7')).toBe('NL-7');
  });
  it('reads the flash', () => {
    expect([flashText(true), flashText(false), flashText(null)]).toEqual(['Fired', 'Did not fire', null]);
  });
  it('writes the settings line a photographer reads', () => {
    expect(settingsLine({ exposureTimeS: 1 / 250, fNumber: 5.6, iso: 100 })).toBe('1/250 s · f/5.6 · ISO 100');
    expect(settingsLine({ exposureTimeS: null, fNumber: null, iso: null })).toBeNull();
  });
});

describe('tax rate as typed', () => {
  it('reads per cent into basis points (1% = 100 bp)', () => {
    expect(parsePercent('20')).toBe(2000);
    expect(parsePercent('7.5')).toBe(750);
    expect(parsePercent('19,6 %')).toBe(1960);
    expect(parsePercent('0')).toBe(0);
  });
  it('refuses what it cannot read, saying how to type it', () => {
    expect(parsePercent('')).toBe('Enter the tax rate, or 0.');
    expect(parsePercent('twenty')).toBe('"twenty" is not a percentage; type it like 20 or 7.5.');
    expect(parsePercent('7.125')).toBe('"7.125" is not a percentage; type it like 20 or 7.5.');
    expect(parsePercent('101')).toBe('Use at most 100%.');
  });
  it('writes basis points back so they read the same', () => {
    expect([percentText(2000), percentText(750), percentText(1925), percentText(0)]).toEqual(['20', '7.5', '19.25', '0']);
    for (const bp of [0, 1, 99, 750, 1960, 2000, 10000]) expect(parsePercent(percentText(bp))).toBe(bp);
  });
});

describe('file sizes', () => {
  it('uses binary megabytes, whole above 10 MB', () => {
    expect([formatBytes(900), formatBytes(290_000), formatBytes(3_500_000), formatBytes(200 * 1024 * 1024)]).toEqual(['900 B', '283 KB', '3.3 MB', '200 MB']);
  });
});
