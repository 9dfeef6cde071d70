import { z } from 'zod';
import { InputError } from '@lamina/errors';

/**
 * scenario.json: everything the simulator needs, in one file. Plan and target coordinates are in the
 * site CRS units (metres or US survey feet); every length whose name ends in `M` is metres; depths are
 * metres below the ground surface; azimuths are degrees clockwise from grid north (+y).
 */

const num = z.number().refine(Number.isFinite, 'expected a finite number');
const pos = num.refine((v) => v > 0, 'expected a number > 0');
const nonneg = num.refine((v) => v >= 0, 'expected a number >= 0');
const xy = z.tuple([num, num]);
const xyd = z.tuple([num, num, nonneg]);
const id = z.string().regex(/^[A-Za-z0-9][A-Za-z0-9._-]*$/, 'expected an id of letters, digits, ".", "_" or "-"');

const material = z.enum(['metal', 'air', 'plastic', 'water', 'concrete', 'wood', 'brick', 'stone']);

const planBase = {
  id,
  heightM: pos.optional(),
  /** Material of the reflecting face; defaults by kind (see README). */
  material: material.optional(),
  /** Relative permittivity of the face, overriding the material's. */
  permittivity: pos.optional(),
  note: z.string().optional(),
};

export const planFeatureSchema = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('building'), ...planBase, footprint: z.array(xy).min(3) }),
  z.strictObject({ kind: z.literal('wall'), ...planBase, path: z.array(xy).min(2), reflectivity: nonneg.optional() }),
  z.strictObject({
    kind: z.literal('fence'),
    ...planBase,
    path: z.array(xy).min(2),
    /** Distance between posts along the fence (m); posts stand at every vertex and every postSpacingM along each segment. */
    postSpacingM: pos,
    postRadiusM: pos.optional(),
    postMaterial: material.optional(),
    /** Amplitude reflectivity of the fence panels between posts (0: invisible mesh). @default 0.1 (0.9 with `mesh`) */
    panelReflectivity: nonneg.optional(),
    /** A continuous metal mesh between the posts: a strong line reflector. @default false */
    mesh: z.boolean().optional(),
  }),
  z.strictObject({ kind: z.literal('post'), ...planBase, at: xy, radiusM: pos.optional() }),
  z.strictObject({ kind: z.literal('tree'), ...planBase, at: xy, radiusM: pos.optional() }),
  z.strictObject({ kind: z.literal('column'), ...planBase, at: xy, radiusM: pos.optional() }),
  /** A cable, beam, canopy edge or branch `heightM` above the ground: a line (`path`) or a point (`at`). */
  z.strictObject({ kind: z.literal('overhead'), ...planBase, heightM: pos, path: z.array(xy).min(2).optional(), at: xy.optional(), radiusM: pos.optional() }),
]);

const repeat = z.strictObject({ count: z.number().int().min(2).max(1000), spacingM: pos, azimuthDeg: num });

export const buriedSchema = z.discriminatedUnion('kind', [
  z.strictObject({
    kind: z.enum(['pipe', 'cable']),
    id,
    utility: z.string().optional(),
    group: z.string().optional(),
    /** Axis end points: [x, y] in CRS units, depth of the axis in m. */
    from: xyd,
    to: xyd,
    radiusM: pos,
    material,
    permittivity: pos.optional(),
    /**
     * Echoes below the pipe: ringing of a metal pipe, the far-wall reflection of an air-filled one
     * (see README, "Big pipes"). @default 0
     */
    multiples: z.number().int().min(0).max(8).optional(),
    note: z.string().optional(),
  }),
  z.strictObject({
    kind: z.literal('compact'),
    id,
    group: z.string().optional(),
    shape: z.enum(['sphere', 'box']),
    /** Centre: [x, y] in CRS units, depth of the centre in m. */
    center: xyd,
    /** Sphere radius (m). */
    radiusM: pos.optional(),
    /** Box size along its own axes [length, width, height] (m); length runs along azimuthDeg. */
    sizeM: z.tuple([pos, pos, pos]).optional(),
    azimuthDeg: num.optional(),
    material,
    permittivity: pos.optional(),
    /** Expand into `count` copies `spacingM` apart along `azimuthDeg`, ids `<id>-1` ... */
    repeat: repeat.optional(),
    note: z.string().optional(),
  }),
]);

export const layerSchema = z.strictObject({
  /** Depth of the top of this layer below the survey origin (m). */
  depthM: pos,
  permittivity: z.number().min(1).max(81),
  attenuationDbPerM: nonneg.optional(),
  /** Dip of the interface (degrees from horizontal) and the azimuth it dips towards. @default 0 */
  dipDeg: z.number().min(0).max(30).optional(),
  dipAzimuthDeg: num.optional(),
  /** Share of the plan where the interface reflects nothing (a laterally discontinuous layer), 0..0.95. @default 0 */
  patchiness: z.number().min(0).max(0.95).optional(),
  /** Size of the patches (correlation length of the random field), m. @default 3 */
  patchSizeM: pos.optional(),
});

export const scenarioSchema = z.strictObject({
  name: id,
  description: z.string().optional(),
  seed: z.number().int().min(0).max(2 ** 32 - 1),
  /**
   * Seed of the receiver noise alone (the same site surveyed again: geometry, clutter, jitter, coupling
   * and roughness stay those of `seed`). @default none: the noise comes from the line's `seed` stream
   */
  noiseSeed: z.number().int().min(0).max(2 ** 32 - 1).optional(),
  crs: z.string().min(1),
  antenna: z.strictObject({
    frequencyMHz: z.number().min(10).max(5000),
    separationM: nonneg,
    /** Beam exponent n: each antenna's amplitude falls as cos(angle from vertical)^n in the soil. @default 1 */
    beamExponent: nonneg.optional(),
    /** Amplitude factor of the shielded antenna towards the air (up and sideways), 0..1. @default 0.35 */
    shielding: z.number().min(0).max(1).optional(),
    /** Amplitude of the direct air wave and of the ground wave at the receiver. @default 1, 0.6 */
    directWave: nonneg.optional(),
    groundWave: nonneg.optional(),
  }),
  recording: z.strictObject({
    sampleIntervalNs: pos,
    samples: z.number().int().min(8).max(65535),
    /** Pre-trigger: time of the first sample before the wave leaves the antenna (ns). */
    timeZeroNs: nonneg,
    /** Standard deviation of per-trace time-zero jitter (ns). @default 0 */
    timeZeroJitterNs: nonneg.optional(),
    /** Slow time-zero drift from start to end of each line (ns), e.g. electronics warming up. @default 0 */
    timeZeroDriftNs: num.optional(),
    /** Sample format in the SEG-Y files. @default "float32" */
    format: z.enum(['float32', 'int16', 'int32']).optional(),
    /** Byte order of the SEG-Y files (rev 2 allows little-endian). @default "big" */
    byteOrder: z.enum(['big', 'little']).optional(),
  }),
  soil: z.strictObject({
    permittivity: z.number().min(1).max(81),
    attenuationDbPerM: nonneg,
    layers: z.array(layerSchema).optional(),
    /** Rough ground: a random surface height field (RMS and correlation length, m); see README "Rough ground". */
    roughness: z.strictObject({ rmsM: nonneg, correlationM: pos }).optional(),
  }),
  noise: z
    .strictObject({
      /** RMS of band-limited random noise, in units of the direct air wave amplitude. @default 0.002 */
      rms: nonneg.optional(),
      /** Amplitude of the low-frequency transient after time-zero ("wow"). @default 0.2 */
      wow: nonneg.optional(),
      /** Amplitude of antenna ringing (horizontal banding after the direct wave). @default 0.02 */
      ringing: nonneg.optional(),
      /** Small random scatterers (stones, roots) per square metre of surveyed ground. @default 0.3 */
      clutterPerM2: nonneg.optional(),
      clutterMaxDepthM: pos.optional(),
      /** Clutter radii drawn log-uniformly in [min, max] (m). @default uniform in [0.02, 0.08] */
      clutterRadiusM: z.tuple([pos, pos]).optional(),
      /** Roots: short shallow linear reflectors per square metre. @default 0 */
      rootsPerM2: nonneg.optional(),
      /** Spectrum of the random noise: "band" (the wavelet's band) or "pink" (1/f power, broadband). @default "band" */
      colour: z.enum(['band', 'pink']).optional(),
      /** Coupling along a line: RMS of a slowly varying relative amplitude, its correlation length (m). @default 0, 5 */
      couplingGainRms: nonneg.optional(),
      couplingLengthM: pos.optional(),
      /** Time-zero steps along a line (antenna lifted, cable moved): count per line and the largest step (ns). @default 0, 0 */
      timeZeroStepsPerLine: z.number().int().min(0).max(100).optional(),
      timeZeroStepNs: nonneg.optional(),
    })
    .optional(),
  survey: z.strictObject({
    /** First trace of the first line, CRS units. */
    origin: xy,
    /** Direction of the lines, degrees clockwise from grid north. */
    azimuthDeg: num,
    lengthM: pos,
    /** Lines are stepped to the right of the first one, up to this width. */
    widthM: nonneg,
    lineSpacingM: pos,
    traceSpacingM: pos,
    /** "zigzag" reverses every other line (bidirectional survey). @default "zigzag" */
    pattern: z.enum(['zigzag', 'parallel']).optional(),
    /** Standard deviation of recorded position error for header coordinates (m). @default 0 */
    positionNoiseM: nonneg.optional(),
    /** Lines (ids "l01", "l02", ...) whose positions go in site.json as start/end or in a CSV. @default one each */
    startEndLines: z.array(id).optional(),
    csvLines: z.array(id).optional(),
    /**
     * A second grid over the same rectangle, lines at this azimuth (azimuthDeg +- 90), ids continuing
     * after the first grid's. @default none
     */
    crossAzimuthDeg: num.optional(),
    /** Line spacing of the second grid (m). @default lineSpacingM */
    crossLineSpacingM: pos.optional(),
    /**
     * Half the cart's width (m). Given, lines go around what stands on the ground: no trace is recorded
     * where the cart would overlap a post, tree, column, wall, fence or building, and the line goes on
     * after it as a new file (ids "l05b", "l05c", ...). Absent, lines run through them. @default absent
     */
    cartHalfWidthM: pos.optional(),
  }),
  plan: z.array(planFeatureSchema).default([]),
  buried: z.array(buriedSchema).default([]),
});

export type Scenario = z.infer<typeof scenarioSchema>;
export type ScenarioPlanFeature = z.infer<typeof planFeatureSchema>;
export type ScenarioBuried = z.infer<typeof buriedSchema>;

function jsonPath(path: readonly PropertyKey[]): string {
  let s = '';
  for (const k of path) s += typeof k === 'number' ? `[${k}]` : s === '' ? String(k) : `.${String(k)}`;
  return s === '' ? '(top level)' : s;
}

function describe(v: unknown): string {
  if (v === undefined) return 'nothing';
  const s = JSON.stringify(v);
  return s === undefined ? String(v) : s.length > 60 ? `${s.slice(0, 57)}...` : s;
}

function valueAt(root: unknown, path: readonly PropertyKey[]): unknown {
  let v: unknown = root;
  for (const k of path) {
    if (v === null || typeof v !== 'object') return undefined;
    v = (v as Record<PropertyKey, unknown>)[k];
  }
  return v;
}

/**
 * Validate a parsed scenario. Throws `InputError(file, ..., { field })` naming the JSON path of the first
 * problem (all problems are listed in the detail), or a semantic problem such as duplicate ids.
 */
export function parseScenario(value: unknown, file = 'scenario.json'): Scenario {
  const r = scenarioSchema.safeParse(value);
  if (!r.success) {
    const issues = r.error.issues;
    const where = (i: (typeof issues)[number]): PropertyKey[] => (i.code === 'unrecognized_keys' ? [...i.path, i.keys[0] ?? ''] : [...i.path]);
    const first = issues[0]!;
    const path = where(first);
    const found = valueAt(value, path);
    let detail: string;
    if (first.code === 'unrecognized_keys') detail = `unknown key "${first.keys[0]}" (the keys are listed in packages/simulate/README.md)`;
    else if (found === undefined) detail = `missing: ${first.message.replace(/^Invalid input: /, '').replace(/, received undefined$/, '')}`;
    else detail = `${first.message.replace(/^Invalid input: |^Invalid option: |^Invalid discriminator value. /, '').replace(/, received \w+$/, '')}, found ${describe(found)}`;
    const more = issues.length > 1 ? ` (and ${issues.length - 1} more: ${issues.slice(1, 4).map((i) => jsonPath(where(i))).join(', ')})` : '';
    throw new InputError(file, `${detail}${more}`, { field: jsonPath(path) });
  }
  const s = r.data;
  const seen = new Map<string, string>();
  const check = (ident: string, path: string): void => {
    const prev = seen.get(ident);
    if (prev !== undefined) throw new InputError(file, `expected unique ids, found "${ident}" also at ${prev}`, { field: path });
    seen.set(ident, path);
  };
  s.plan.forEach((f, i) => check(f.id, `plan[${i}].id`));
  s.buried.forEach((b, i) => {
    check(b.id, `buried[${i}].id`);
    if (b.kind === 'compact') {
      if (b.shape === 'sphere' && b.radiusM === undefined) throw new InputError(file, 'missing: a sphere needs radiusM', { field: `buried[${i}].radiusM` });
      if (b.shape === 'box' && b.sizeM === undefined) throw new InputError(file, 'missing: a box needs sizeM [length, width, height]', { field: `buried[${i}].sizeM` });
    }
    if (b.kind !== 'compact' && b.from[0] === b.to[0] && b.from[1] === b.to[1] && b.from[2] === b.to[2]) {
      throw new InputError(file, 'expected "to" different from "from", found the same point', { field: `buried[${i}].to` });
    }
  });
  (s.soil.layers ?? []).forEach((l, i, all) => {
    const prev = all[i - 1];
    if (prev && l.depthM <= prev.depthM) throw new InputError(file, `expected layers ordered by depth, found ${l.depthM} m after ${prev.depthM} m`, { field: `soil.layers[${i}].depthM` });
  });
  const sv = s.survey;
  const nTraces = Math.floor(sv.lengthM / sv.traceSpacingM + 1e-9) + 1;
  const nLines = surveyLineCount(s);
  if (nTraces < 2 || nTraces > 1_000_000) throw new InputError(file, `expected 2 to 1000000 traces per line (lengthM / traceSpacingM + 1), found ${nTraces}`, { field: 'survey.traceSpacingM' });
  if (nLines > 100_000) throw new InputError(file, `expected at most 100000 lines (widthM / lineSpacingM + 1), found ${nLines}`, { field: 'survey.lineSpacingM' });
  const ids = new Set(Array.from({ length: nLines }, (_, i) => `l${String(i + 1).padStart(Math.max(2, String(nLines).length), '0')}`));
  for (const key of ['startEndLines', 'csvLines'] as const) {
    (sv[key] ?? []).forEach((id, i) => {
      if (!ids.has(id)) throw new InputError(file, `expected a line id of this survey (l01 ... ${[...ids].pop()}), found "${id}"`, { field: `survey.${key}[${i}]` });
    });
  }
  if (sv.crossAzimuthDeg !== undefined && crossSign(sv.azimuthDeg, sv.crossAzimuthDeg) === 0) {
    throw new InputError(file, `expected a cross azimuth at right angles to the lines (${sv.azimuthDeg} +- 90), found ${sv.crossAzimuthDeg}`, { field: 'survey.crossAzimuthDeg' });
  }
  s.plan.forEach((f, i) => {
    if (f.kind === 'overhead' && (f.path === undefined) === (f.at === undefined)) throw new InputError(file, 'expected either "path" (a line) or "at" (a point)', { field: `plan[${i}]` });
  });
  const t = s.recording;
  if (t.timeZeroNs >= t.samples * t.sampleIntervalNs) {
    throw new InputError(file, `expected time-zero inside the record (< ${t.samples * t.sampleIntervalNs} ns), found ${t.timeZeroNs}`, { field: 'recording.timeZeroNs' });
  }
  return s;
}

/** +1 when the cross azimuth is the lines' azimuth + 90 degrees, -1 for - 90, 0 otherwise. */
export function crossSign(azimuthDeg: number, crossAzimuthDeg: number): number {
  const d = (((crossAzimuthDeg - azimuthDeg) % 360) + 360) % 360;
  return Math.abs(d - 90) < 1e-9 ? 1 : Math.abs(d - 270) < 1e-9 ? -1 : 0;
}

/** Lines of the first grid and of the second (0 without `crossAzimuthDeg`). */
export function surveyGridCounts(s: Scenario): [number, number] {
  const sv = s.survey;
  const n = Math.floor(sv.widthM / sv.lineSpacingM + 1e-9) + 1;
  if (sv.crossAzimuthDeg === undefined) return [n, 0];
  return [n, Math.floor(sv.lengthM / (sv.crossLineSpacingM ?? sv.lineSpacingM) + 1e-9) + 1];
}

export function surveyLineCount(s: Scenario): number {
  const [a, b] = surveyGridCounts(s);
  return a + b;
}
