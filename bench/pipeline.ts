/**
 * How fast the frame pipeline is, on generated 24-megapixel photo-like JPEGs (6000×4000):
 *  - photos per minute per core for the full variant set (thumbnail, watermarked proof, three
 *    social crops, EXIF, cull measures), from the process's CPU time;
 *  - against a lone 2048-px resize of the same files in the same run (target: at most 2×);
 *  - against ImageMagick's convert making the same set (target: at least 5× faster), limited to
 *    one thread so both sides are counted per core;
 *  - peak resident memory of a fresh process building frames two at a time (target: < 400 MB),
 *    with glibc malloc's defaults and with two settings that curb its fragmentation under
 *    libvips' worker threads: MALLOC_ARENA_MAX=2, and MALLOC_MMAP_THRESHOLD_=131072 (large
 *    buffers always mapped, and so returned to the system when freed).
 *
 * Figures are CPU time where it matters, so other work on the machine disturbs them less; the load
 * average at the start is printed with them.
 *
 * Run: `npx tsx bench/pipeline.ts [frames]`. Prints a markdown table.
 */
import { execFile, spawn } from 'node:child_process';
import { mkdtemp, readFile, readdir, rm, writeFile } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { promisify } from 'node:util';
import sharp from 'sharp';
import { syntheticPortrait } from '../scripts/lib/synthetic-portrait';
import { cropRect, RATIOS, SOCIAL_SIZES, type SocialRatioKey } from '../src/lib/ratios';
import { buildFrameVariants, WATERMARK_FONT_FILE } from '../src/lib/server/images';

const run = promisify(execFile);
const CONVERT = '/usr/bin/convert';
const WIDTH = 6000;
const HEIGHT = 4000;
const WATERMARK = { text: 'Harbour Light Studio', opacity: 0.35 };
const thisFile = fileURLToPath(import.meta.url);
const repoRoot = path.resolve(path.dirname(thisFile), '..');

export interface BenchResult {
  frames: number;
  frameSize: string;
  cores: number;
  sharpThreadsPerImage: number;
  fullSet: { cpuMsPerPhoto: number; wallMsPerPhoto: number; photosPerMinutePerCore: number };
  loneResize: { cpuMsPerPhoto: number; wallMsPerPhoto: number };
  fullSetVsLoneResize: number;
  fullSetVsLoneResizeWall: number;
  loadAverage: number;
  imagemagick: {
    frames: number;
    cpuMsPerPhoto: number;
    cpuMsPerPhotoWithSizeHint: number;
    fullSetFasterBy: number;
    fullSetFasterByWithSizeHint: number;
  } | null;
  concurrency2: Array<{
    setting: string;
    builds: number;
    peakRssMb: number;
    baselineRssMb: number;
    cpuMsPerPhoto: number;
    photosPerMinute: number;
  }> | null;
  targets: { vsLoneResizeAtMost2x: boolean; vsImageMagickAtLeast5x: boolean | null; peakRssUnder400Mb: boolean | null };
}

function cpuMs(since: NodeJS.CpuUsage): number {
  const d = process.cpuUsage(since);
  return (d.user + d.system) / 1000;
}

async function time<T>(fn: () => Promise<T>): Promise<{ value: T; cpu: number; wall: number }> {
  const c = process.cpuUsage();
  const t = performance.now();
  const value = await fn();
  return { value, cpu: cpuMs(c), wall: performance.now() - t };
}

/** The same outputs with ImageMagick: thumbnail, proof with tiled diagonal text, three crops. */
function imagemagickArgs(input: string, outDir: string, focus: { x: number; y: number }, sizeHint: boolean): string[] {
  const proof = { width: 2048, height: Math.round((2048 * HEIGHT) / WIDTH) };
  const fontPx = Math.round(Math.min(proof.width, proof.height) / 24);
  const args: string[] = [];
  // A size hint lets libjpeg decode at half size, the way sharp's shrink-on-load does.
  if (sizeHint) args.push('-define', 'jpeg:size=3000x2000');
  args.push(input, '-auto-orient', '-write', 'mpr:src', '+delete');
  // A watermark tile: text at 30° on a transparent block, repeated over the proof.
  args.push(
    '-size', `${fontPx * 14}x${fontPx * 7}`, 'xc:none', '-font', WATERMARK_FONT_FILE, '-pointsize', String(fontPx),
    '-fill', `rgba(255,255,255,${WATERMARK.opacity})`, '-gravity', 'center', '-annotate', '330x330+0+0', WATERMARK.text,
    '+gravity', '-write', 'mpr:wm', '+delete',
  );
  args.push('mpr:src', '-resize', '480x480', '-quality', '78', '-write', path.join(outDir, 'thumb.jpg'), '+delete');
  args.push(
    'mpr:src', '-resize', `${proof.width}x${proof.height}`, '-size', `${proof.width}x${proof.height}`, 'tile:mpr:wm',
    '-composite', '-quality', '82', '-write', path.join(outDir, 'proof.jpg'), '+delete',
  );
  const srcW = sizeHint ? 3000 : WIDTH;
  const srcH = sizeHint ? 2000 : HEIGHT;
  for (const r of RATIOS) {
    if (!(r.key in SOCIAL_SIZES)) continue;
    const rect = cropRect(srcW, srcH, r.w, r.h, focus);
    const size = SOCIAL_SIZES[r.key as SocialRatioKey];
    args.push(
      'mpr:src', '-crop', `${rect.width}x${rect.height}+${rect.left}+${rect.top}`, '+repage',
      '-resize', `${size.width}x${size.height}!`, '-quality', '88', '-write', path.join(outDir, `${r.key}.jpg`), '+delete',
    );
  }
  args.pop(); // keep the last image so there is something for the closing null: output
  args.push('null:');
  return args;
}

/** CPU milliseconds per photo of ImageMagick making the set, read by GNU time. */
async function timeImagemagick(files: string[], outDir: string, sizeHint: boolean): Promise<number> {
  let total = 0;
  for (const file of files) {
    // One thread: ImageMagick's OpenMP would otherwise spread over every core.
    const { stderr } = await run(
      '/usr/bin/time',
      ['-f', 'cpu %U %S', CONVERT, '-limit', 'thread', '1', ...imagemagickArgs(file, outDir, { x: 0.5, y: 0.4 }, sizeHint)],
      { maxBuffer: 16 * 1024 * 1024 },
    );
    const m = /cpu ([\d.]+) ([\d.]+)\s*$/.exec(stderr);
    if (!m) throw new Error(`no timing from GNU time: ${stderr.slice(-200)}`);
    total += (Number(m[1]) + Number(m[2])) * 1000;
  }
  return total / files.length;
}

/** In a fresh process: build every frame in `dir` `rounds` times, two at a time; report peak RSS. */
async function rssChild(dir: string, rounds: number): Promise<void> {
  const once = (await readdir(dir)).filter((f) => f.endsWith('.jpg')).map((f) => path.join(dir, f));
  const files = Array.from({ length: rounds }, () => once).flat();
  // Load the modules and the font first, so the baseline is the app at rest.
  await buildFrameVariants({ original: await readFile(files[0]!), watermark: WATERMARK });
  const baseline = process.memoryUsage().rss;
  let next = 0;
  const t = performance.now();
  const cpu = process.cpuUsage();
  const worker = async () => {
    while (next < files.length) {
      const file = files[next++]!;
      await buildFrameVariants({ original: await readFile(file), watermark: WATERMARK });
    }
  };
  await Promise.all([worker(), worker()]);
  const wall = performance.now() - t;
  const used = process.cpuUsage(cpu);
  process.stdout.write(
    JSON.stringify({
      peakRss: process.resourceUsage().maxRSS * 1024,
      baseline,
      wall,
      cpuMs: (used.user + used.system) / 1000,
      frames: files.length,
    }) + '\n',
  );
}

async function measureRss(
  dir: string,
  rounds: number,
  env: Record<string, string> = {},
): Promise<NonNullable<BenchResult['concurrency2']>[number]> {
  const child = spawn(process.execPath, ['--import', 'tsx', thisFile, '--rss-child', dir, String(rounds)], {
    cwd: repoRoot,
    env: { ...process.env, ...env },
    stdio: ['ignore', 'pipe', 'inherit'],
  });
  let out = '';
  child.stdout.on('data', (d: Buffer) => (out += d.toString()));
  const code = await new Promise<number | null>((resolve) => child.on('close', resolve));
  if (code !== 0) throw new Error(`memory run exited with ${code}`);
  const r = JSON.parse(out.trim().split('\n').pop()!) as { peakRss: number; baseline: number; wall: number; cpuMs: number; frames: number };
  return {
    setting: Object.entries(env).map(([k, v]) => `${k}=${v}`).join(' ') || 'glibc defaults',
    builds: r.frames,
    cpuMsPerPhoto: r.cpuMs / r.frames,
    peakRssMb: r.peakRss / 1024 / 1024,
    baselineRssMb: r.baseline / 1024 / 1024,
    photosPerMinute: (r.frames / r.wall) * 60_000,
  };
}

export async function benchPipeline(
  opts: { frames?: number; imagemagickFrames?: number; rssRounds?: number; skipImagemagick?: boolean; skipRss?: boolean } = {},
): Promise<BenchResult> {
  const frames = Math.max(1, opts.frames ?? 6);
  const loadAverage = os.loadavg()[0]!;
  const dir = await mkdtemp(path.join(os.tmpdir(), 'fillcard-bench-'));
  try {
    const files: string[] = [];
    const buffers: Buffer[] = [];
    for (let i = 0; i < frames; i++) {
      const buf = await syntheticPortrait({
        width: WIDTH,
        height: HEIGHT,
        seed: 1000 + i,
        exif: { ExposureTime: '1/250', FNumber: 5.6, ISO: 100, Make: 'Northlight Optics' },
      });
      const file = path.join(dir, `frame-${i}.jpg`);
      await writeFile(file, buf);
      files.push(file);
      buffers.push(buf);
    }
    // Warm-up: font loading and first-call costs are not per photo.
    await buildFrameVariants({ original: buffers[0]!, watermark: WATERMARK });
    await sharp(buffers[0]!).rotate().resize(2048, 2048, { fit: 'inside' }).jpeg().toBuffer();

    const full = await time(async () => {
      for (const buf of buffers) await buildFrameVariants({ original: buf, watermark: WATERMARK });
    });
    const lone = await time(async () => {
      for (const buf of buffers) await sharp(buf).rotate().resize(2048, 2048, { fit: 'inside' }).jpeg({ quality: 82 }).toBuffer();
    });
    const fullCpu = full.cpu / frames;
    const loneCpu = lone.cpu / frames;

    let imagemagick: BenchResult['imagemagick'] = null;
    if (!opts.skipImagemagick) {
      const imFiles = files.slice(0, Math.max(1, Math.min(frames, opts.imagemagickFrames ?? 2)));
      const outDir = await mkdtemp(path.join(dir, 'im-'));
      const plain = await timeImagemagick(imFiles, outDir, false);
      const hinted = await timeImagemagick(imFiles, outDir, true);
      imagemagick = {
        frames: imFiles.length,
        cpuMsPerPhoto: plain,
        cpuMsPerPhotoWithSizeHint: hinted,
        fullSetFasterBy: plain / fullCpu,
        fullSetFasterByWithSizeHint: hinted / fullCpu,
      };
    }
    let concurrency2: BenchResult['concurrency2'] = null;
    if (!opts.skipRss) {
      // Several rounds: glibc's per-thread arenas keep growing for a while before they settle.
      const rounds = Math.max(1, opts.rssRounds ?? 3);
      concurrency2 = [
        await measureRss(dir, rounds),
        await measureRss(dir, rounds, { MALLOC_ARENA_MAX: '2' }),
        await measureRss(dir, rounds, { MALLOC_MMAP_THRESHOLD_: '131072' }),
      ];
    }

    const result: BenchResult = {
      frames,
      frameSize: `${WIDTH}×${HEIGHT}`,
      cores: os.availableParallelism(),
      sharpThreadsPerImage: sharp.concurrency(),
      fullSet: { cpuMsPerPhoto: fullCpu, wallMsPerPhoto: full.wall / frames, photosPerMinutePerCore: 60_000 / fullCpu },
      loneResize: { cpuMsPerPhoto: loneCpu, wallMsPerPhoto: lone.wall / frames },
      fullSetVsLoneResize: fullCpu / loneCpu,
      fullSetVsLoneResizeWall: full.wall / lone.wall,
      loadAverage,
      imagemagick,
      concurrency2,
      targets: {
        vsLoneResizeAtMost2x: fullCpu / loneCpu <= 2,
        vsImageMagickAtLeast5x: imagemagick ? imagemagick.fullSetFasterBy >= 5 : null,
        peakRssUnder400Mb: concurrency2 ? concurrency2[0]!.peakRssMb < 400 : null,
      },
    };
    return result;
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}

export function benchTable(r: BenchResult): string {
  const f = (n: number, d = 0) => n.toFixed(d);
  const ok = (b: boolean | null) => (b === null ? 'not run' : b ? 'met' : 'MISSED');
  const rows = [
    ['measure', 'value', 'target'],
    ['---', '---', '---'],
    ['frames', `${r.frames} × ${r.frameSize} JPEG`, ''],
    ['machine', `${r.cores} cores, load average ${f(r.loadAverage, 1)} at start, sharp ${r.sharpThreadsPerImage} thread per image`, ''],
    ['full set, CPU per photo', `${f(r.fullSet.cpuMsPerPhoto)} ms`, ''],
    ['full set, photos per minute per core', f(r.fullSet.photosPerMinutePerCore), ''],
    ['full set, wall time per photo (one at a time)', `${f(r.fullSet.wallMsPerPhoto)} ms`, ''],
    ['lone 2048-px resize, CPU per photo', `${f(r.loneResize.cpuMsPerPhoto)} ms`, ''],
    ['full set ÷ lone resize (CPU)', `${f(r.fullSetVsLoneResize, 2)}×`, `≤ 2× (${ok(r.targets.vsLoneResizeAtMost2x)})`],
    ['full set ÷ lone resize (wall, one photo at a time)', `${f(r.fullSetVsLoneResizeWall, 2)}×`, ''],
  ];
  if (r.imagemagick) {
    rows.push(
      [`ImageMagick convert, same set, 1 thread, CPU per photo (${r.imagemagick.frames} frames)`, `${f(r.imagemagick.cpuMsPerPhoto)} ms`, ''],
      ['full set faster than ImageMagick by', `${f(r.imagemagick.fullSetFasterBy, 1)}×`, `≥ 5× (${ok(r.targets.vsImageMagickAtLeast5x)})`],
      ['ImageMagick with a jpeg:size hint, CPU per photo', `${f(r.imagemagick.cpuMsPerPhotoWithSizeHint)} ms`, ''],
      ['full set faster than hinted ImageMagick by', `${f(r.imagemagick.fullSetFasterByWithSizeHint, 1)}×`, ''],
    );
  }
  for (const m of r.concurrency2 ?? []) {
    rows.push([
      `two at a time, ${m.builds} builds, fresh process, ${m.setting}`,
      `peak RSS ${f(m.peakRssMb)} MB (at rest ${f(m.baselineRssMb)} MB); ${f(m.cpuMsPerPhoto)} ms CPU and ${f(m.photosPerMinute)} photos/min on ${r.cores} cores`,
      `< 400 MB (${ok(m.peakRssMb < 400)})`,
    ]);
  }
  return rows.map((row) => `| ${row.join(' | ')} |`).join('\n');
}

const invokedDirectly = process.argv[1] !== undefined && import.meta.url === pathToFileURL(path.resolve(process.argv[1])).href;
if (invokedDirectly) {
  if (process.argv[2] === '--rss-child') {
    await rssChild(process.argv[3]!, Number(process.argv[4] ?? 1));
  } else {
    const frames = process.argv[2] ? Number(process.argv[2]) : undefined;
    const result = await benchPipeline({ frames });
    console.log(benchTable(result));
  }
}
