/**
 * The shapes the finals screens receive, shared by the server (which builds them) and the islands
 * (which show them). Pure: no server code.
 */

export type FinalKind = 'full' | 'crop_4x5' | 'crop_1x1' | 'crop_9x16' | 'print_8x10';
export const CROP_KINDS = ['crop_4x5', 'crop_1x1', 'crop_9x16', 'print_8x10'] as const;
export type CropKind = (typeof CROP_KINDS)[number];

export const KIND_LABEL: Record<FinalKind, string> = {
  full: 'Full size',
  crop_4x5: '4:5 post',
  crop_1x1: '1:1 square',
  crop_9x16: '9:16 story',
  print_8x10: '8×10 print',
};

export interface Img {
  url: string;
  width: number;
  height: number;
}

export type FinalState = 'waiting' | 'processing' | 'ready' | 'failed';

/** One uploaded final as the studio sees it. */
export interface DeskFinal {
  id: string;
  name: string;
  bytes: number;
  width: number | null;
  height: number | null;
  state: FinalState;
  error: string | null;
  uploadedAt: string;
  uploadedBy: string | null;
  thumb: Img | null;
}

/** One pick on the retouch list, with its final and any final on its way. */
export interface RetouchItem {
  frameId: string;
  /** The frame's place in the shoot, as the client counts it. */
  number: number;
  name: string;
  note: string;
  thumb: Img | null;
  /** waiting: no final yet; processing: one is being built; ready: delivered-quality final in place; failed: the last upload failed. */
  state: 'waiting' | 'processing' | 'ready' | 'failed';
  final: DeskFinal | null;
  /** A final uploaded for this pick that is not in place yet (the first one, or a replacement). */
  incoming: DeskFinal | null;
}

/** A file that found no pick on its own: the studio matches it by hand or removes it. */
export interface UnmatchedFinal extends DeskFinal {
  /**
   * The pick its name points to. When that pick has a final already (or one on its way), matching
   * replaces it and needs a yes.
   */
  suggestion: { frameId: string; name: string; number: number; hasFinal: boolean } | null;
  /** Picks its name could stand for equally (two originals with one name). */
  ambiguous: string[];
}

export interface DownloadLogEntry {
  id: string;
  at: string;
  who: string;
  whoKind: 'client' | 'member';
  what: string;
  ip: string | null;
  userAgent: string | null;
}

export interface FinalsDeskData {
  shootId: string;
  stage: string;
  title: string;
  clientName: string;
  downloadUntil: string | null;
  picks: RetouchItem[];
  unmatched: UnmatchedFinal[];
  counts: { picks: number; ready: number; incoming: number; failed: number; unmatched: number };
  /** What this member may do here. */
  can: { upload: boolean; handOff: boolean; downloadsLog: boolean; manage: boolean };
  /** Why uploading is closed, when it is. */
  uploadClosed: string | null;
  downloads: DownloadLogEntry[] | null;
  /** Ready finals the client has not been e-mailed about (after a partial hand-off). */
  unannounced: number;
}

/** One final as the client sees it after hand-off. */
export interface GalleryFinal {
  id: string;
  number: number;
  fileName: string;
  width: number;
  height: number;
  bytes: number;
  preview: Img;
  downloadUrl: string;
  crops: { kind: CropKind; label: string; width: number; height: number; preview: Img | null; downloadUrl: string; fileName: string }[];
}

export interface GalleryFinalsData {
  shootId: string;
  title: string;
  clientName: string;
  studioName: string;
  downloadUntil: string;
  finals: GalleryFinal[];
  zip: { finalsUrl: string; cropsUrl: string; finalsBytes: number; cropsBytes: number; finalsName: string; cropsName: string };
}
