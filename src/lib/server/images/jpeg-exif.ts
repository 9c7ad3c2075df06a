/**
 * Edits the EXIF block of a JPEG in place, without re-encoding: removes the GPS directory (and
 * wipes its bytes, so the position cannot be recovered from the file), can drop the embedded
 * preview and can mark the colour space as sRGB. sharp keeps or drops EXIF only as a whole; delivered finals must keep the
 * camera settings but never where the picture was taken.
 */

const TYPE_SIZES: Record<number, number> = { 1: 1, 2: 1, 3: 2, 4: 4, 5: 8, 6: 1, 7: 1, 8: 2, 9: 4, 10: 8, 11: 4, 12: 8, 13: 4 };

const TAG_EXIF_IFD = 0x8769;
const TAG_THUMB_OFFSET = 0x0201;
const TAG_THUMB_LENGTH = 0x0202;
const TAG_GPS_IFD = 0x8825;
const TAG_COLOR_SPACE = 0xa001;

class ExifFormatError extends Error {}

class TiffView {
  readonly little: boolean;
  constructor(readonly bytes: Buffer) {
    const order = bytes.toString('latin1', 0, 2);
    if (order !== 'II' && order !== 'MM') throw new ExifFormatError('bad byte order');
    this.little = order === 'II';
    if (this.u16(2) !== 42) throw new ExifFormatError('bad TIFF magic');
  }
  check(offset: number, length: number): void {
    if (offset < 0 || length < 0 || offset + length > this.bytes.length) throw new ExifFormatError('offset out of range');
  }
  u16(o: number): number {
    this.check(o, 2);
    return this.little ? this.bytes.readUInt16LE(o) : this.bytes.readUInt16BE(o);
  }
  u32(o: number): number {
    this.check(o, 4);
    return this.little ? this.bytes.readUInt32LE(o) : this.bytes.readUInt32BE(o);
  }
  setU16(o: number, v: number): void {
    this.check(o, 2);
    if (this.little) this.bytes.writeUInt16LE(v, o);
    else this.bytes.writeUInt16BE(v, o);
  }
  entries(ifdOffset: number): { at: number; tag: number; type: number; count: number }[] {
    const n = this.u16(ifdOffset);
    this.check(ifdOffset + 2, n * 12 + 4);
    const out = [];
    for (let i = 0; i < n; i++) {
      const at = ifdOffset + 2 + i * 12;
      out.push({ at, tag: this.u16(at), type: this.u16(at + 2), count: this.u32(at + 4) });
    }
    return out;
  }
  /** Zeroes an IFD and every value it stores outside itself. */
  wipeIfd(ifdOffset: number): void {
    const list = this.entries(ifdOffset);
    for (const e of list) {
      const size = (TYPE_SIZES[e.type] ?? 1) * e.count;
      if (size > 4) {
        const valueAt = this.u32(e.at + 8);
        this.check(valueAt, size);
        this.bytes.fill(0, valueAt, valueAt + size);
      }
    }
    this.bytes.fill(0, ifdOffset, ifdOffset + 2 + list.length * 12 + 4);
  }
  /** The value of a one-count SHORT or LONG entry. */
  scalar(e: { at: number; type: number; count: number }): number | null {
    if (e.count !== 1) return null;
    if (e.type === 3) return this.u16(e.at + 8);
    if (e.type === 4) return this.u32(e.at + 8);
    return null;
  }
  setU32(o: number, v: number): void {
    this.check(o, 4);
    if (this.little) this.bytes.writeUInt32LE(v, o);
    else this.bytes.writeUInt32BE(v, o);
  }
  /** Drops one entry from an IFD by shifting the later ones down; data offsets stay valid. */
  removeEntry(ifdOffset: number, entryAt: number): void {
    const n = this.u16(ifdOffset);
    const end = ifdOffset + 2 + n * 12 + 4; // includes the next-IFD pointer
    this.bytes.copy(this.bytes, entryAt, entryAt + 12, end);
    this.bytes.fill(0, end - 12, end);
    this.setU16(ifdOffset, n - 1);
  }
}

function scrubTiff(tiff: Buffer, opts: ScrubOptions): void {
  const view = new TiffView(tiff);
  const ifd0 = view.u32(4);
  for (const e of view.entries(ifd0)) {
    if (e.tag === TAG_GPS_IFD && opts.dropGps) {
      const gpsAt = view.u32(e.at + 8);
      if (gpsAt > 0) view.wipeIfd(gpsAt);
      view.removeEntry(ifd0, e.at);
      break;
    }
  }
  if (opts.dropThumbnail) {
    const nextAt = ifd0 + 2 + view.entries(ifd0).length * 12;
    const ifd1 = view.u32(nextAt);
    if (ifd1 > 0) {
      const list = view.entries(ifd1);
      const offset = list.find((e) => e.tag === TAG_THUMB_OFFSET);
      const length = list.find((e) => e.tag === TAG_THUMB_LENGTH);
      const from = offset ? view.scalar(offset) : null;
      const size = length ? view.scalar(length) : null;
      if (from !== null && size !== null && size > 0) {
        view.check(from, size);
        view.bytes.fill(0, from, from + size);
      }
      view.wipeIfd(ifd1);
      view.setU32(nextAt, 0);
    }
  }
  if (opts.markSrgb) {
    const exifEntry = view.entries(ifd0).find((e) => e.tag === TAG_EXIF_IFD);
    if (exifEntry) {
      const exifAt = view.u32(exifEntry.at + 8);
      const cs = view.entries(exifAt).find((e) => e.tag === TAG_COLOR_SPACE && e.type === 3 && e.count === 1);
      if (cs) view.setU16(cs.at + 8, 1);
    }
  }
}

export interface ScrubOptions {
  dropGps: boolean;
  /**
   * Drop the small preview cameras and editors embed (IFD1). In a final it would still show the
   * frame before retouching.
   */
  dropThumbnail?: boolean;
  /** Set Exif ColorSpace to sRGB (1); use only when the pixels are sRGB. */
  markSrgb: boolean;
}

const EXIF_HEADER = Buffer.from('Exif\0\0', 'latin1');
const XMP_HEADER = Buffer.from('http://ns.adobe.com/xap/1.0/\0', 'latin1');
const XMP_EXT_HEADER = Buffer.from('http://ns.adobe.com/xmp/extension/\0', 'latin1');

/**
 * Returns a copy of the JPEG with GPS removed from its EXIF. XMP and Photoshop (IPTC) blocks are
 * dropped entirely since either may repeat the position. If the EXIF block cannot be understood
 * it is dropped as a whole: losing camera settings is better than leaking a location.
 */
export function scrubJpegExif(jpeg: Buffer, opts: ScrubOptions = { dropGps: true, markSrgb: false }): Buffer {
  if (jpeg.length < 4 || jpeg[0] !== 0xff || jpeg[1] !== 0xd8) throw new Error('not a JPEG');
  const parts: Buffer[] = [jpeg.subarray(0, 2)];
  let pos = 2;
  while (pos + 4 <= jpeg.length) {
    if (jpeg[pos] !== 0xff) throw new Error(`JPEG marker expected at byte ${pos}`);
    const marker = jpeg[pos + 1]!;
    if (marker === 0xff) {
      pos += 1; // fill byte
      continue;
    }
    if (marker === 0xda /* start of scan: the rest is image data */ || marker === 0xd9) break;
    if (marker === 0x01 || (marker >= 0xd0 && marker <= 0xd7)) {
      parts.push(jpeg.subarray(pos, pos + 2));
      pos += 2;
      continue;
    }
    const length = jpeg.readUInt16BE(pos + 2);
    const end = pos + 2 + length;
    if (length < 2 || end > jpeg.length) throw new Error('JPEG segment runs past the end');
    const segment = jpeg.subarray(pos, end);
    const payload = segment.subarray(4);
    if (marker === 0xe1 && payload.subarray(0, 6).equals(EXIF_HEADER)) {
      const copy = Buffer.from(segment);
      try {
        scrubTiff(copy.subarray(10), opts);
        parts.push(copy);
      } catch (err) {
        if (!(err instanceof ExifFormatError || err instanceof RangeError)) throw err;
        // unreadable EXIF: leave it out
      }
    } else if (
      opts.dropGps &&
      ((marker === 0xe1 && (payload.subarray(0, XMP_HEADER.length).equals(XMP_HEADER) ||
        payload.subarray(0, XMP_EXT_HEADER.length).equals(XMP_EXT_HEADER))) ||
        marker === 0xed)
    ) {
      // XMP or Photoshop block: dropped
    } else {
      parts.push(segment);
    }
    pos = end;
  }
  parts.push(jpeg.subarray(pos));
  return Buffer.concat(parts);
}
