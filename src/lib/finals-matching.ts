/**
 * Matching a retoucher's finished files to the client's picks by file name. Editors and export
 * presets add words to a name ("HLP_2041-Edit.jpg", "hlp_2041_FINAL.tif", "HLP_2041 copy 2.jpg"),
 * so a final's name is compared with each pick's original name without its extension, case or
 * those editing words. Pure: the server and the uploader's screen use the same rules.
 */

export interface PickName {
  frameId: string;
  /** The original file name of the picked frame, e.g. "HLP_2041.jpg". */
  name: string;
}

export type NameMatch =
  | { kind: 'match'; frameId: string }
  /** More than one pick has this name (the same stem from two cameras, say): matched by hand. */
  | { kind: 'ambiguous'; frameIds: string[] }
  | { kind: 'none' };

/**
 * Words editors and export presets add around a name (common practice, no published source):
 * "edit", "final", "retouched", "copy", version numbers, and a browser's "(1)" for a second
 * download of the same file.
 */
const EDIT_WORD = '(?:edit(?:ed)?|final|retouch(?:ed)?|ret|re|copy|fin|done|export(?:ed)?|hi-?res|web|print)';
const SEP = '[\\s._-]';

/** One trailing editing word (with its separator), or a short version number after a separator. */
const TRAILING = [
  new RegExp(`${SEP}*\\(\\d{1,3}\\)$`, 'i'), // "name (1)"
  new RegExp(`${SEP}+copy${SEP}*\\d{0,3}$`, 'i'), // "name copy", "name copy 2"
  new RegExp(`${SEP}+${EDIT_WORD}${SEP}*\\d{0,2}$`, 'i'), // "name-edit", "name_final2", "name-Edit-2" (after "-2" went)
  new RegExp(`${SEP}+v\\d{1,3}$`, 'i'), // "name_v2"
  new RegExp(`${SEP}+\\d{1,2}$`, 'i'), // "name-2"
];
/** A leading editing word: "final_HLP_2041", "edit-HLP_2041". */
const LEADING = new RegExp(`^${EDIT_WORD}${SEP}+`, 'i');

/** A file name without folder and extension, in one Unicode form, lower case, separators made alike. */
export function comparableStem(fileName: string): string {
  const base = fileName.split(/[\\/]/).pop() ?? '';
  const dot = base.lastIndexOf('.');
  const stem = dot > 0 ? base.slice(0, dot) : base;
  return stem.normalize('NFC').toLowerCase().trim().replace(/[\s._-]+/g, '_');
}

/**
 * The name a final may stand for, from the most literal to the most stripped: the stem itself, then
 * one editing word fewer at each step. The first that names a pick wins, so an original whose own
 * name ends in "-2" or "_final" still matches exactly before anything is stripped.
 */
export function candidateStems(fileName: string): string[] {
  const base = fileName.split(/[\\/]/).pop() ?? '';
  const dot = base.lastIndexOf('.');
  let raw = (dot > 0 ? base.slice(0, dot) : base).normalize('NFC').trim();
  const out: string[] = [];
  const push = (s: string) => {
    const c = comparableStem(`${s}.x`);
    if (c && !out.includes(c)) out.push(c);
  };
  push(raw);
  for (let guard = 0; guard < 12; guard++) {
    let next = raw;
    for (const re of TRAILING) {
      const stripped = next.replace(re, '');
      if (stripped !== next && stripped.trim()) {
        next = stripped;
        break;
      }
    }
    if (next === raw) {
      const stripped = raw.replace(LEADING, '');
      if (stripped === raw || !stripped.trim()) break;
      next = stripped;
    }
    raw = next.trim();
    push(raw);
  }
  return out;
}

/** The pick a final's file name stands for, if exactly one does. */
export function matchFinalName(fileName: string, picks: PickName[]): NameMatch {
  const byStem = new Map<string, string[]>();
  for (const p of picks) {
    const s = comparableStem(p.name);
    byStem.set(s, [...(byStem.get(s) ?? []), p.frameId]);
  }
  for (const stem of candidateStems(fileName)) {
    const hits = byStem.get(stem);
    if (!hits) continue;
    return hits.length === 1 ? { kind: 'match', frameId: hits[0]! } : { kind: 'ambiguous', frameIds: hits };
  }
  return { kind: 'none' };
}

/**
 * Matches a batch of finals at once. Two files in one batch that stand for the same pick both match
 * it; the caller decides (the second replaces the first only when someone confirms).
 */
export function matchFinalNames(fileNames: string[], picks: PickName[]): Map<string, NameMatch> {
  return new Map(fileNames.map((n) => [n, matchFinalName(n, picks)]));
}
