/** Shapes the API sends to islands. Shared so server and browser agree. */
import type { Stage } from './schemas/shoot';

export type FrameState = 'waiting' | 'processing' | 'ready' | 'failed';
export type VariantKind = 'thumb' | 'proof' | 'crop_4x5' | 'crop_1x1' | 'crop_9x16';

/** The camera settings a frame's EXIF gives, as the pipeline stores them and the API sends them. */
export interface CameraSettings {
  cameraMake: string | null;
  cameraModel: string | null;
  lens: string | null;
  focalLengthMm: number | null;
  focalLength35mm: number | null;
  fNumber: number | null;
  exposureTimeS: number | null;
  exposureBiasEv: number | null;
  iso: number | null;
  flashFired: boolean | null;
}

export interface FrameDto extends CameraSettings {
  id: string;
  name: string;
  state: FrameState;
  error: string | null;
  hidden: boolean;
  width: number | null;
  height: number | null;
  bytes: number;
  takenAt: string | null;
  takenAtOffset: string | null;
  ev100: number | null;
  meanLuminance: number | null;
  clippedShare: number | null;
  sharpness: number | null;
  phash: string | null;
  focus: { x: number; y: number } | null;
  /** True from a focus point change until the crops have been rebuilt around it. */
  cropsPending: boolean;
  /** Presigned URLs of the frame's variants, by kind. */
  urls: Partial<Record<VariantKind, string>>;
}

export interface FrameCounts {
  total: number;
  ready: number;
  waiting: number;
  processing: number;
  failed: number;
}

export interface ShootFramesDto {
  stage: Stage;
  counts: FrameCounts;
  frames: FrameDto[];
}
