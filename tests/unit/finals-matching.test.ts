/**
 * Matching finals to picks by file name. The editing words tried here are the ones retouchers'
 * editors and export presets commonly add (common practice, no published source); every expected
 * match below is a name a person would read as the same frame.
 */
import { describe, expect, it } from 'vitest';
import { candidateStems, comparableStem, matchFinalName, matchFinalNames, type PickName } from '../../src/lib/finals-matching';

const picks: PickName[] = [
  { frameId: 'f2041', name: 'HLP_2041.jpg' },
  { frameId: 'f2042', name: 'HLP_2042.JPG' },
  { frameId: 'f2043', name: 'hlp_2043.jpeg' },
  { frameId: 'fportrait2', name: 'portrait-2.jpg' },
  { frameId: 'fportrait', name: 'portrait.jpg' },
  { frameId: 'fzoe', name: 'Zoë garden 07.jpg' },
  { frameId: 'ffinal', name: 'window_final.jpg' },
];

const frameFor = (name: string, list = picks) => {
  const m = matchFinalName(name, list);
  return m.kind === 'match' ? m.frameId : m.kind;
};

describe('comparableStem', () => {
  it('drops folder and extension, folds case and makes separators alike', () => {
    expect(comparableStem('HLP_2041.JPG')).toBe('hlp_2041');
    expect(comparableStem('exports/HLP-2041.jpg')).toBe('hlp_2041');
    expect(comparableStem('C:\\edits\\HLP 2041.tif')).toBe('hlp_2041');
    expect(comparableStem('no-extension')).toBe('no_extension');
  });

  it('treats composed and decomposed accents as the same name (Unicode NFC)', () => {
    expect(comparableStem('Zoe\u0308.jpg')).toBe(comparableStem('Zo\u00eb.jpg'));
  });
});

describe('matching a final to its pick', () => {
  it.each([
    ['HLP_2041.jpg', 'f2041'],
    ['hlp_2041.jpg', 'f2041'],
    ['HLP_2041.tif', 'f2041'],
    ['HLP_2041-edit.jpg', 'f2041'],
    ['HLP_2041-Edit.jpg', 'f2041'],
    ['HLP_2041_edit.jpg', 'f2041'],
    ['HLP_2041-edited.jpg', 'f2041'],
    ['HLP_2041_final.jpg', 'f2041'],
    ['HLP_2041-final.jpg', 'f2041'],
    ['hlp_2042_FINAL.jpg', 'f2042'],
    ['HLP_2041 copy.jpg', 'f2041'],
    ['HLP_2041 copy 2.jpg', 'f2041'],
    ['HLP_2041-2.jpg', 'f2041'],
    ['HLP_2041_v2.jpg', 'f2041'],
    ['HLP_2041_V12.jpg', 'f2041'],
    ['HLP_2041-retouched.jpg', 'f2041'],
    ['HLP_2041_retouch.jpg', 'f2041'],
    ['HLP_2041-Edit-2.jpg', 'f2041'],
    ['HLP_2041-edit_final_v3.jpg', 'f2041'],
    ['HLP_2041 (1).jpg', 'f2041'],
    ['HLP_2041-edit (2).jpg', 'f2041'],
    ['final_HLP_2041.jpg', 'f2041'],
    ['edit-HLP_2043.png', 'f2043'],
    ['HLP 2041 final.jpg', 'f2041'],
    ['HLP-2042-edit.webp', 'f2042'],
    ['  HLP_2041-edit .jpg', 'f2041'],
    ['Zoe\u0308 garden 07-edit.jpg', 'fzoe'],
    ['ZOË GARDEN 07_final.jpg', 'fzoe'],
  ])('%s → %s', (name, expected) => {
    expect(frameFor(name)).toBe(expected);
  });

  it('prefers an exact name before stripping anything', () => {
    // "portrait-2" is a pick of its own: it must not be read as a second version of "portrait".
    expect(frameFor('portrait-2.jpg')).toBe('fportrait2');
    expect(frameFor('portrait-2-edit.jpg')).toBe('fportrait2');
    expect(frameFor('portrait-edit.jpg')).toBe('fportrait');
    // An original whose own name ends in an editing word still matches itself.
    expect(frameFor('window_final.jpg')).toBe('ffinal');
    expect(frameFor('window_final-edit.jpg')).toBe('ffinal');
  });

  it.each([
    'HLP_2044.jpg',
    'HLP_2044-edit.jpg',
    'HLP_20411.jpg',
    'HLP_204.jpg',
    'XHLP_2041.jpg',
    'HLP_2041x.jpg',
    'edit.jpg',
    'final.jpg',
    'copy 2.jpg',
    '',
  ])('%s matches no pick', (name) => {
    expect(matchFinalName(name, picks)).toEqual({ kind: 'none' });
  });

  it('leaves a name two picks share for matching by hand', () => {
    const twins: PickName[] = [
      { frameId: 'a', name: 'DSC_0001.jpg' },
      { frameId: 'b', name: 'DSC_0001.JPG' },
      { frameId: 'c', name: 'DSC_0002.jpg' },
    ];
    expect(matchFinalName('DSC_0001-edit.jpg', twins)).toEqual({ kind: 'ambiguous', frameIds: ['a', 'b'] });
    expect(frameFor('dsc_0002_final.jpg', twins)).toBe('c');
  });

  it('finds nothing when there are no picks', () => {
    expect(matchFinalName('HLP_2041-edit.jpg', [])).toEqual({ kind: 'none' });
  });

  it('matches a batch, two files for one pick both pointing at it', () => {
    const result = matchFinalNames(['HLP_2041-edit.jpg', 'HLP_2041_v2.jpg', 'unrelated.jpg'], picks);
    expect([...result.values()]).toEqual([
      { kind: 'match', frameId: 'f2041' },
      { kind: 'match', frameId: 'f2041' },
      { kind: 'none' },
    ]);
  });
});

describe('candidateStems', () => {
  it('strips one editing word at a time, most literal first', () => {
    expect(candidateStems('HLP_2041-Edit-2.jpg')).toEqual(['hlp_2041_edit_2', 'hlp_2041']);
    expect(candidateStems('HLP_2041_final_v2 copy.jpg')).toEqual(['hlp_2041_final_v2_copy', 'hlp_2041_final_v2', 'hlp_2041_final', 'hlp_2041']);
  });

  it('never strips a name down to nothing', () => {
    expect(candidateStems('final.jpg')).toEqual(['final']);
    expect(candidateStems('edit-final.jpg')).toEqual(['edit_final', 'edit']);
  });
});
