import { describe, expect, it } from 'vitest';
import { renderToString } from 'react-dom/server';
import LightNotesEditor, { SAFETY_CAUTION, SIMPLIFICATION } from '@/components/light/LightNotesEditor';
import ShootInsights, { type InsightFrame } from '@/components/insights/ShootInsights';
import { distanceStops, type LightNotes } from '@/lib/light';

/** Text as a reader sees it: tags out, the entities React writes decoded. */
function visibleText(html: string): string {
  return html
    .replace(/<[^>]+>/g, ' ')
    .replace(/&#x27;/g, "'")
    .replace(/&quot;/g, '"')
    .replace(/&amp;/g, '&')
    .replace(/\s+/g, ' ');
}

// Two bounce boards at the distances of a small-studio setup (practitioner's account): one at
// 14 in (0.3556 m) and one at 2 ft (0.6096 m) from the subject. Here the nearer board is the key,
// so key-to-fill is +1.56 stops by distance alone, a ratio of 2^1.5552 = 2.94:1.
const notes: LightNotes = {
  room: { widthM: 2, depthM: 4 },
  subject: { x: 1, y: 2.5 },
  sources: [
    { id: 'k', kind: 'bounce_board', label: 'Near board', x: 1 - 0.3556, y: 2.5, aimsAt: 'subject' },
    { id: 'f', kind: 'bounce_board', label: 'Far board', x: 1 + 0.6096, y: 2.5, aimsAt: 'subject' },
    { id: 'fl', kind: 'flash', label: 'Bounced flash', power: 4, x: 1, y: 3.6, aimsAt: 'near board', modifier: 'bare' },
  ],
  keyId: 'k',
  fillId: 'f',
};

describe('LightNotesEditor renders on the server', () => {
  it('shows the computed key-to-fill in stops and as a ratio', () => {
    expect(distanceStops(0.6096, 0.3556)).toBeCloseTo(1.5552, 4);
    const text = visibleText(
      renderToString(<LightNotesEditor shootId="shoot-1" initial={notes} cameraFromExif={null} canEdit={true} />),
    );
    expect(text).toContain('Key to fill: 1.56 stops · 2.94:1');
    // Each source's distance and level against the key.
    expect(text).toContain('0.36 m');
    expect(text).toContain('0.61 m');
    expect(text).toContain('−1.56 stops');
  });

  it('states the simplification and the stand and mains caution', () => {
    const text = visibleText(renderToString(<LightNotesEditor shootId="s" initial={notes} cameraFromExif={null} canEdit={true} />));
    expect(text).toContain(SIMPLIFICATION);
    expect(text).toContain(SAFETY_CAUTION);
    expect(SAFETY_CAUTION).toMatch(/sandbags/);
    expect(SAFETY_CAUTION).toMatch(/electrical codes/);
  });

  it('labels the plan and each glyph for assistive technology', () => {
    const html = renderToString(<LightNotesEditor shootId="s" initial={notes} cameraFromExif={null} canEdit={true} />);
    expect(html).toMatch(/<title id="[^"]+">Lighting plan<\/title>/);
    expect(html).toMatch(/<desc id="[^"]+">Top-down plan of a room 2 m wide and 4 m deep/);
    expect(visibleText(html.replace(/aria-label="([^"]*)"/g, '>$1<'))).toContain(
      'Key: bounce board, "Near board", 0.36 m from the subject',
    );
  });

  it('prefills the camera from EXIF and shows its EV', () => {
    // f/8 at 1/250 s: EV = log2(64 × 250) = 13.97 (APEX; Wikipedia "Exposure value" lists 13.966).
    const text = visibleText(
      renderToString(
        <LightNotesEditor shootId="s" initial={null} cameraFromExif={{ shutterS: 1 / 250, fNumber: 8, iso: 100, focalLengthMm: 85 }} canEdit={true} />,
      ),
    );
    expect(text).toContain('EV 14.0');
    expect(text).toContain('at ISO 100 for f/8, 1/250 s (shot at ISO 100), 85 mm');
    expect(text).toContain('Filled in from the most common settings in the shoot’s EXIF');
  });

  it('is read only without edit rights: no save button, controls disabled', () => {
    const html = renderToString(<LightNotesEditor shootId="s" initial={notes} cameraFromExif={null} canEdit={false} />);
    expect(html).not.toContain('Save light notes');
    expect(html).toMatch(/<fieldset disabled=""/);
  });
});

// The insights island shares this file: both are render checks of the shoot's light and settings views.
describe('ShootInsights renders on the server', () => {
  const base: Omit<InsightFrame, 'id' | 'name'> = {
    thumbUrl: null,
    exposureTimeS: 1 / 250,
    fNumber: 5.6,
    iso: 100,
    focalLengthMm: 85,
    takenAt: '2031-05-01T14:03:10+02:00',
    ev100: 12.94,
    meanLuminance: 0.2,
    clippedShare: 0,
    sharpness: 10,
    phash: null,
  };
  // Luminance 0.2, 0.2, 0.1: median 0.2, so c is log2(0.1 / 0.2) = 1.0 stop darker.
  // c also has 4 % clipped (over the 2 % limit); b at 1/125 s, f/8 shows up in the charts.
  const frames: InsightFrame[] = [
    { ...base, id: 'a', name: 'sitting-001.jpg' },
    { ...base, id: 'b', name: 'sitting-002.jpg', exposureTimeS: 1 / 125, fNumber: 8, takenAt: '2031-05-01T14:05:00+02:00' },
    { ...base, id: 'c', name: 'sitting-003.jpg', thumbUrl: '/t/c.jpg', meanLuminance: 0.1, clippedShare: 0.04 },
  ];

  it('lists the hints in plain words with links to the frames', () => {
    const html = renderToString(<ShootInsights shootId="s1" frames={frames} frameHrefBase="/studio/shoots/s1/frames" />);
    const text = visibleText(html);
    expect(text).toContain("1.0 stop darker than the shoot's middle frame");
    expect(text).toContain('4% of pixels clipped');
    expect(html).toContain('href="/studio/shoots/s1/frames#frame-c"');
    expect(html).toContain('src="/t/c.jpg"');
  });

  it('tabulates the settings with plain labels and the per-minute counts', () => {
    const text = visibleText(renderToString(<ShootInsights shootId="s1" frames={frames} frameHrefBase="/f" />));
    // Two frames at 1/250 s and one at 1/125 s; minutes 14:03 (2), 14:04 (0), 14:05 (1).
    expect(text).toContain('1/125 s 1 ');
    expect(text).toContain('1/250 s 2 ');
    expect(text).toContain('f/5.6 2 ');
    expect(text).toContain('14:03 2 14:04 0 14:05 1');
    expect(text).toContain('most used: 1/250 s · f/5.6 · ISO 100 · 85 mm');
  });

  it('shows an empty state with no frames', () => {
    const text = visibleText(renderToString(<ShootInsights shootId="s1" frames={[]} frameHrefBase="/f" />));
    expect(text).toContain('No frames are ready yet');
  });
});
