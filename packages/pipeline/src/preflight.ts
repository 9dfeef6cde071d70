import { medianHigh } from '@lamina/stats';
import { statfs } from 'node:fs/promises';
import { totalmem } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { InputError } from '@lamina/errors';
import { checkSurvey, shownPath, syncOpenSegy, type Site, type SurveyCheck } from '@lamina/site';
import { defaultWindows, resolveGrid, surveyGeometryOf } from '@lamina/slices';
import { constantModel } from '@lamina/velocity';

export interface PreflightOptions {
  cellSizeM?: number;
  sliceThicknessM?: number;
  sliceOverlap?: number;
  maxDepthM?: number;
  /** Memory the run may use, bytes. @default the machine's total memory */
  memoryBytes?: number;
  /** Free bytes on the output folder's filesystem. @default measured with statfs */
  freeBytes?: number;
}

/** What the headers say the run will make and need, before any trace is read. */
export interface SizeEstimate {
  width: number;
  height: number;
  cellSizeM: number;
  slices: number;
  traces: number;
  /** Peak disk use of the run in the stage folder (point spill + raw slice stack + slices.tif with overviews, uncompressed + radargrams undecimated + 1 MiB for the other files), bytes. */
  diskBytes: number;
  /** Grid-wide memory (5 bytes a cell for the forecast) plus the smallest screening band, bytes. */
  memoryBytes: number;
}

/** The gridder's own limit (packages/slices grid-options.ts). */
const MAX_CELLS = 4e8;
/** Bytes per cell and slice of a screened band (packages/pipeline slice-and-screen.ts). */
const BAND_BYTES_PER_CELL_SLICE = 70;
/** The JSON, GeoPackage, DXF, CSV and report files of a small site with filesystem blocks (measured: about 300 KB), with room to spare. */
const FIXED_OUTPUT_BYTES = 2 ** 20;
/** Smallest band overlap, m (slice-and-screen.ts: max(20 m, ...)); a band is at least four overlaps tall. */
const MIN_OVERLAP_M = 20;

const gib = (b: number): string => (b >= 2 ** 30 ? `${Number((b / 2 ** 30).toPrecision(3))} GiB` : b >= 2 ** 20 ? `${Number((b / 2 ** 20).toPrecision(3))} MiB` : `${Math.ceil(b / 2 ** 10)} KiB`);

/** The free space of the filesystem that holds `dir` (or its nearest existing parent). */
async function freeSpace(dir: string): Promise<number> {
  let d = resolve(dir);
  for (;;) {
    try {
      const s = await statfs(d);
      return s.bavail * s.bsize;
    } catch {
      const up = dirname(d);
      if (up === d) return Infinity;
      d = up;
    }
  }
}

/**
 * Grid, slice count, disk and memory of a run, from the survey check's header facts. The slice count
 * does not depend on the velocity (depth range v t / 2 over half-wavelength slices v / 2f: about t f
 * slices), so a constant 0.1 m/ns stands in for the model fitted later.
 */
export function estimateSize(site: Site, survey: SurveyCheck, options: PreflightOptions = {}): SizeEstimate {
  const mpu = site.crs.metresPerUnit;
  const lineStarts = new Int32Array(survey.lines.length + 1);
  survey.lines.forEach((l, i) => (lineStarts[i + 1] = (lineStarts[i] as number) + l.thinned.length / 2));
  const geometry = surveyGeometryOf({ lineStarts, line: (l) => (survey.lines[l] as SurveyCheck['lines'][number]).thinned });
  const steps = survey.lines.map((l) => l.stepM);
  geometry.traceSpacing = (steps.length ? medianHigh(steps) : 0) / mpu;
  let grid;
  try {
    ({ grid } = resolveGrid(geometry, { crs: site.crs.input, metresPerUnit: mpu, ...(options.cellSizeM !== undefined ? { cellSizeM: options.cellSizeM } : {}) }));
  } catch {
    // only the cell-count limit throws here; measure it ourselves below
    const cell = options.cellSizeM !== undefined ? options.cellSizeM / mpu : Math.max((Number.isFinite(geometry.lineSpacing) ? geometry.lineSpacing : 20 * geometry.traceSpacing) / 4, geometry.traceSpacing);
    const [x0, y0, x1, y1] = geometry.bounds;
    grid = { width: Math.ceil((x1 - x0) / cell) + 1, height: Math.ceil((y1 - y0) / cell) + 1, cellSize: cell };
  }
  let shallow = survey.lines[0];
  for (const l of survey.lines) if (shallow && (l.nSamples - 1) * l.dtNs < (shallow.nSamples - 1) * shallow.dtNs) shallow = l;
  let slices = 0;
  try {
    slices = shallow
      ? defaultWindows({
          model: constantModel(0.1),
          separationM: site.antenna.separationM,
          frequencyMHz: site.antenna.frequencyMHz,
          nSamples: shallow.nSamples,
          dtNs: shallow.dtNs,
          timeZeroNs: 0,
          ...(options.maxDepthM !== undefined ? { bottomM: options.maxDepthM } : {}),
          ...(options.sliceThicknessM !== undefined ? { thicknessM: options.sliceThicknessM } : {}),
          ...(options.sliceOverlap !== undefined ? { overlap: options.sliceOverlap } : {}),
        }).length
      : 0;
  } catch {
    slices = 0; // a record too short for any slice is refused later, with its own message
  }
  const traces = survey.lines.reduce((a, l) => a + l.nTraces, 0);
  const radargramBytes = survey.lines.reduce((a, l) => a + 4 * l.nTraces * l.nSamples, 0);
  const cells = grid.width * grid.height;
  const cellM = grid.cellSize * mpu;
  const bandRows = Math.min(grid.height, 4 * Math.ceil(MIN_OVERLAP_M / cellM));
  return {
    width: grid.width,
    height: grid.height,
    cellSizeM: cellM,
    slices,
    traces,
    diskBytes: traces * (16 + 8 * slices) + cells * slices * 4 * (1 + 4 / 3) + radargramBytes + FIXED_OUTPUT_BYTES,
    memoryBytes: 5 * cells + grid.width * bandRows * BAND_BYTES_PER_CELL_SLICE * Math.max(1, slices),
  };
}

/**
 * The checks of `lamina process` before pass 1: what the positions mean (`checkSurvey`), then whether the
 * run fits: cell count, memory and the free space of the output folder's filesystem. Refuses at once,
 * with the numbers and the option to change.
 */
export async function preflight(site: Site, outDir: string, options: PreflightOptions = {}): Promise<{ survey: SurveyCheck; size: SizeEstimate; freeBytes: number }> {
  const numbers: [keyof PreflightOptions, string, (v: number) => boolean, string][] = [
    ['cellSizeM', '--cell-size', (v) => v > 0, 'a positive number of metres'],
    ['sliceThicknessM', '--slice-thickness', (v) => v > 0, 'a positive number of metres'],
    ['maxDepthM', '--max-depth', (v) => v > 0, 'a positive number of metres'],
    ['sliceOverlap', '--slice-overlap', (v) => v >= 0 && v <= 0.9, 'a fraction from 0 to 0.9'],
  ];
  for (const [key, flag, ok, what] of numbers) {
    const v = options[key];
    if (v !== undefined && !(Number.isFinite(v) && ok(v))) throw new InputError('command line', `expected ${what}, found ${v}`, { field: flag });
  }
  // (synchronous reads: the run has nothing else to do before its lines start)
  const survey = await checkSurvey(site, { open: syncOpenSegy() });
  const size = estimateSize(site, survey, options);
  const siteFile = shownPath(join(site.dir, 'site.json'));
  const cells = size.width * size.height;
  const grid = `a grid of ${size.width} x ${size.height} cells of ${Number(size.cellSizeM.toPrecision(3))} m`;
  if (cells > MAX_CELLS) {
    throw new InputError(siteFile, `expected a grid of at most ${MAX_CELLS.toExponential(0)} cells, found that the lines need ${grid} (${cells.toExponential(2)} cells); choose a larger --cell-size or split the site with \`lamina tiles\``);
  }
  const samples = Math.max(0, ...survey.lines.map((l) => l.nSamples));
  if (size.slices > samples) {
    // a slice thinner than a sample holds no new data; such a count is a typo in the thickness
    throw new InputError('command line', `expected slices at least one sample deep (at most ${samples} slices from records of ${samples} samples), found ${size.slices} slices; choose a thicker --slice-thickness or a smaller --slice-overlap`, { field: '--slice-thickness' });
  }
  const memory = options.memoryBytes ?? totalmem();
  if (size.memoryBytes > memory) {
    throw new InputError(siteFile, `expected a run that fits in memory (${gib(memory)}), found that ${grid} and ${size.slices} slices need about ${gib(size.memoryBytes)}; choose a larger --cell-size, a smaller --max-depth, or split the site with \`lamina tiles\``);
  }
  const free = options.freeBytes ?? (await freeSpace(dirname(resolve(outDir))));
  if (size.diskBytes > free) {
    throw new InputError(shownPath(resolve(outDir)), `expected room for the run's files (up to ${gib(size.diskBytes)} for ${size.traces} traces, ${grid} and ${size.slices} slices), found ${gib(free)} free on its filesystem; free space, write elsewhere, or choose a larger --cell-size or a smaller --max-depth`);
  }
  return { survey, size, freeBytes: free };
}
