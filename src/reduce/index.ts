/**
 * The reduce stage: Scan -> Chi (see reduce.ts for the steps and their sources).
 */
export { reduceScan, resolveReductionSettings, MIN_K_POINTS, type Reduction, type ReductionOptions, type ReductionSettings } from './reduce';
export { makeChi, chiToJson, chiFromJson, CHI_K_STEP, CHI_FORMAT, CHI_FORMAT_VERSION, type Chi, type ChiInit, type NormalisedSpectrum, type ChiSource } from './chi';
export { findE0, smoothedDerivative, normalise, DEFAULT_NORMALISATION, type E0Report, type NormalisationSettings, type Normalisation } from './edge';
export { fitBackground, DEFAULT_BACKGROUND, type BackgroundSettings, type BackgroundFit } from './background';
export { refineBackgroundWithModel, type StandardIteration, type StandardIterationOptions } from './background-standard';
export { estimateNoise, DEFAULT_NOISE, type NoiseSettings, type NoiseEstimate } from './noise';
export { calibrateScan, type CalibrationResult, type CalibrationOptions } from './calibrate';
export { mergeScans, pointNoise, DEFAULT_MERGE, type MergeSettings, type MergeResult } from './merge';
export { deglitchScan, detectSpikes, DEFAULT_GLITCHES, type GlitchSettings, type RemovedPoint } from './deglitch';
export { normalisedToXdi } from './xdi-out';
export { syntheticScan, syntheticChi, syntheticBackground, DEFAULT_SYNTHETIC_SHELLS, type SyntheticScanOptions, type SyntheticShell } from './synthetic';
