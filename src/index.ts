// The public API of jostle's pure core. Anything not re-exported here is internal.

// Data in
export type { Frame } from './frame.js';
export type { Tag } from './tag.js';

// The pipeline
export { Pipeline, type DetectorFactory, type PipelineCounters } from './pipeline/pipeline.js';
export { resolvePipelineOptions, type PipelineOptions, type DriftCorrection } from './pipeline/pipelineOptions.js';
export { refreshContext } from './pipeline/refreshContext.js';
export { msdLags } from './msd/msdLags.js';

// Report and alerts
export type { Report, Estimate, Alert, MsdPoint } from './report.js';
export { AlertEngine, type AlertChange, type AlertEngineOptions } from './alerts/alertEngine.js';
export type { Condition, AlertKind, AlertLevel, Effect } from './alerts/condition.js';

// Detectors
export type { Detector } from './detectors/detector.js';
export type { DetectorContext } from './detectors/detectorContext.js';
export type { FrameSteps } from './detectors/frameSteps.js';
export { createDetectors, DETECTOR_NAMES } from './detectors/createDetectors.js';
export { DriftDetector } from './detectors/drift/driftDetector.js';
export { siegmundArl } from './detectors/drift/siegmundArl.js';
export { siegmundThreshold } from './detectors/drift/siegmundThreshold.js';
export { VibrationDetector } from './detectors/vibration/vibrationDetector.js';
export { TemperatureDetector } from './detectors/temperature/temperatureDetector.js';
export { gammaCusumArl } from './detectors/temperature/gammaCusumArl.js';
export { ClumpingDetector } from './detectors/clumping/clumpingDetector.js';
export { clarkEvans } from './detectors/clumping/clarkEvans.js';
export { TimingDetector } from './detectors/quality/timingDetector.js';
export { NoiseDetector } from './detectors/quality/noiseDetector.js';
export { TracksDetector } from './detectors/quality/tracksDetector.js';
export { SparseDetector } from './detectors/quality/sparseDetector.js';

// Estimators, physics, linking, simulation
export * from './estimators/index.js';
export * from './physics/index.js';
export { Linker, linkerDefaults, type LinkerOptions, type LinkerEstimates } from './linking/linker.js';
export { solveAssignment } from './linking/solveAssignment.js';
export { solveSparseAssignment } from './linking/solveSparseAssignment.js';
export { crowding } from './linking/crowding.js';
export { greedyConfusionBound } from './linking/greedyConfusionBound.js';
export { simulate } from './simulate/simulate.js';
export { scenarios } from './simulate/scenarios.js';
export type { SimulationOptions } from './simulate/simulationOptions.js';

// Statistics helpers
export { Random } from './stats/random.js';
export { clopperPearson, normalQuantile, studentTQuantile, chiSquareQuantile, fQuantile } from './stats/quantiles.js';
