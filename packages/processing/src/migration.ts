import type { RadarLine } from '@lamina/radar-data';
import { checkLayers, traceSlots, type MigrationLayer } from './fk';
import { kirchhoffMigrate } from './kirchhoff';
import { phaseShiftMigrate } from './phase-shift';
import { stoltMigrate } from './stolt';

export const MIGRATION_METHODS = ['auto', 'stolt', 'phase-shift', 'kirchhoff'] as const;
export type MigrationMethodOption = (typeof MIGRATION_METHODS)[number];
export type MigrationMethod = Exclude<MigrationMethodOption, 'auto'>;

export interface MigrationOptions {
  /** Constant velocity of the ground, m/ns (Stolt and Kirchhoff; phase-shift when `layers` is not given). */
  velocityMPerNs: number;
  /** Interval velocities by depth (velocity.json `model.layers`); more than one layer is a layered model. @default undefined */
  layers?: readonly MigrationLayer[];
  /** Which migration; `auto` by `chooseMigration`. @default 'auto' */
  method?: MigrationMethodOption;
  /** Antenna separation along the line, m. @default 0 */
  separationM?: number;
  /** Largest half-aperture, m: Kirchhoff's summation; the f-k methods' dip limit min(maxAngle, atan(apertureM / z)) at depth z. @default 2 */
  apertureM?: number;
  /** Largest angle from the vertical: Kirchhoff's summation angle, the f-k methods' dip limit. @default 60 */
  maxAngleDeg?: number;
  /** Kirchhoff: tapered fraction of the aperture; f-k: of the angle range. @default 0.2 */
  taper?: number;
  /**
   * Kirchhoff: the half-derivative filter first (see `kirchhoffMigrate`); f-k: the plain wave-equation
   * result, else the half-integral with it, which gives Kirchhoff's default result (see `StoltOptions`). @default false
   */
  halfDerivative?: boolean;
  /** Metres per CRS unit of `line.x/y`. @default 1 */
  metresPerUnit?: number;
}

export interface MigrationChoice {
  method: MigrationMethod;
  /** Why, in words (for the recipe log). */
  reason: string;
  /** Mean trace spacing (least squares on trace index), m. */
  traceSpacingM: number;
  /** Largest distance of a trace from its regular slot, m. */
  maxSlotDeviationM: number;
}

const round = (x: number, d = 4): number => Math.round(x * 10 ** d) / 10 ** d || 0;

/**
 * The migration that fits the line and the model. The f-k methods (Stolt, phase-shift) put trace i at
 * i dx (dx the mean spacing); they are used when every trace lies within half a mean spacing of that
 * slot, so the image they give is within one trace of where the positions put it. A line whose spacing
 * spreads more (a trace further than dx / 2 from its slot) is migrated by Kirchhoff, which sums over the
 * positions as they are (with the constant `velocityMPerNs`, even for a layered model). Otherwise: Stolt
 * for a constant model (no layers or one), phase-shift for a layered one. A method other than `auto` is
 * taken as asked.
 */
export function chooseMigration(line: RadarLine, options: MigrationOptions): MigrationChoice {
  const slots = traceSlots(line, options.metresPerUnit ?? 1);
  const base = { traceSpacingM: round(slots.spacingM, 5), maxSlotDeviationM: round(slots.maxDeviationM, 5) };
  const layered = (options.layers?.length ?? 0) > 1;
  const asked = options.method ?? 'auto';
  const spread = `largest trace deviation from a regular slot ${round(slots.maxDeviationM)} m, mean spacing ${round(slots.spacingM)} m`;
  if (asked !== 'auto') return { method: asked, reason: `asked for (${spread})`, ...base };
  if (slots.maxDeviationM > slots.spacingM / 2) {
    return { method: 'kirchhoff', reason: `irregular trace spacing (${spread} > half the spacing)${layered ? '; constant velocity of the site' : ''}`, ...base };
  }
  return layered
    ? { method: 'phase-shift', reason: `layered model, regular trace spacing (${spread})`, ...base }
    : { method: 'stolt', reason: `constant model, regular trace spacing (${spread})`, ...base };
}

/**
 * Migrates a line by the method of `options.method` (`auto`: `chooseMigration`): Stolt f-k
 * (`stoltMigrate`), Gazdag phase-shift (`phaseShiftMigrate`) or Kirchhoff (`kirchhoffMigrate`). All keep
 * the input's bistatic time axis and pass samples before the ground wave through. `out` may be `line.data`.
 */
export function migrate(line: RadarLine, options: MigrationOptions, out?: Float32Array): RadarLine {
  const v = options.velocityMPerNs;
  if (!(v > 0)) throw new Error(`migration: velocity must be > 0 m/ns, found ${v}`);
  const method = options.method === undefined || options.method === 'auto' ? chooseMigration(line, options).method : options.method;
  const common = {
    separationM: options.separationM ?? 0,
    maxAngleDeg: options.maxAngleDeg ?? 60,
    taper: options.taper ?? 0.2,
    halfDerivative: options.halfDerivative ?? false,
    apertureM: options.apertureM ?? 2,
    metresPerUnit: options.metresPerUnit ?? 1,
  };
  switch (method) {
    case 'stolt':
      return stoltMigrate(line, { ...common, velocityMPerNs: v }, out);
    case 'phase-shift': {
      const layers = options.layers && options.layers.length > 0 ? checkLayers(options.layers) : [{ topM: 0, velocityMPerNs: v }];
      return phaseShiftMigrate(line, { ...common, layers }, out);
    }
    case 'kirchhoff':
      return kirchhoffMigrate(line, { ...common, velocityMPerNs: v }, out);
  }
}
