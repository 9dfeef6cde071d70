export { nextPow2 } from './fft';
export { spectralCentroidMHz } from './spectrum';
export { alongTrackM, medianOf, periodNs, withData } from './line-util';
export {
  type HilbertWorkspace,
  hilbertWorkspace,
  analyticSignal,
  hilbertEnvelope,
  hilbertEnvelopePair,
  envelope,
} from './envelope';
export {
  type FilterKind,
  type FiltfiltWorkspace,
  butterworthSos,
  sosfiltZi,
  sosfiltInPlace,
  sosfiltfiltPadlen,
  filtfiltWorkspace,
  sosfiltfilt,
  sosfiltfiltPair,
} from './butterworth';
export { type ZeroPhaseOptions, type BandpassOptions, nyquistFraction, zeroPhaseFilter, bandpass } from './bandpass';
export { type DewowOptions, oddWindow, dewow } from './dewow';
export { type BackgroundOptions, backgroundRemoval } from './background';
export { type DivergenceGainOptions, type AgcOptions, divergenceGainCurve, divergenceGain, agc } from './gain';
export {
  type TimeZeroOptions,
  type TimeZeroResult,
  type TimeZeroPick,
  pickFirstArrival,
  shiftTrace,
  timeZero,
} from './time-zero';
export {
  MIGRATION_METHODS,
  type MigrationMethod,
  type MigrationMethodOption,
  type MigrationOptions,
  type MigrationChoice,
  chooseMigration,
  migrate,
} from './migration';
export { type KirchhoffOptions, halfDerivative, kirchhoffMigrate } from './kirchhoff';
export { type StoltOptions, type StoltKernelOptions, stoltKernel, stoltMigrate, stoltModel } from './stolt';
export { type PhaseShiftOptions, type PhaseShiftKernelOptions, phaseShiftKernel, phaseShiftMigrate, phaseShiftModel } from './phase-shift';
export { type AirObjects, type AirEventOptions, type AirEventResult, type AirEventKernelOptions, type SteepAirResult, airEventMask, airEventKernel, removeAirEvents, subtractSteepAirEvents } from './air-events';
export { type MigrationLayer, type TraceSlots, traceSlots, bistaticTime, dipWeight } from './fk';
export {
  STEP_NAMES,
  type StepName,
  type Step,
  type Recipe,
  type RecipeContext,
  type RecipeLogEntry,
  type RecipeResult,
  type RunOptions,
  stepSchema,
  recipeSchema,
  parseRecipe,
  defaultRecipe,
  AIR_EVENTS_STEP,
  withAirEvents,
  withoutAirEvents,
  runStep,
  runRecipe,
} from './recipe';
export {
  type RecipeTask,
  type PoolOptions,
  type ProcessingPool,
  createProcessingPool,
  processLines,
  processLineInWorker,
} from './pool';
export { Kernels, kernelsOf, useKernels } from './wasm-kernels';
