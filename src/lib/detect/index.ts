// The detector engine and its rules: pure, deterministic, shared by live ingest and replay.
export * from './events';
export * from './rules';
export type { Detector, DetectorContext, RunInfo, ParsedRunInfo } from './detector';
export { runInfoSchema, parseRunInfo } from './run-info';
export { DetectorEngine, detectAll, SNAPSHOT_FORMAT, type EngineSnapshot, type OpenCondition, type RunChange } from './engine';
export { acceptSignal, isOpen } from './open-set';
export { lockLost, hasPhaseShots, LOCK_EVIDENCE_WINDOWS, type LockLostState } from './lock-lost';
export { agentSilent, type AgentSilentState } from './agent-silent';
export { switchingBurst, type SwitchingBurstState } from './switching-burst';
export { rateDrift, ratioEstimate, type RateDriftState, type RatioEstimate } from './rate-drift';
export { occupancyImbalance, isSymmetric, type OccupancyImbalanceState } from './occupancy-imbalance';
export { auxLimit, AUX_EVIDENCE_WINDOWS, type AuxLimitState } from './aux-limit';
export {
	expectFrame,
	compileRates,
	measuredTemperature,
	TEMPERATURE_AUX,
	type FrameExpectation,
	type ProcessExpectation
} from './expected';
export { windowAlpha, budgetWindows } from './budget';
export {
	detectorStatus,
	ruleStatus,
	DETECTOR_KINDS,
	DETECTOR_TITLES,
	type DetectorStatus,
	type StatusCode,
	type StatusNote,
	type StatusNoteCode,
	type StatusOptions,
	type EngineView,
	type StatusRun
} from './status';
export { designAt, designFor, bandOf, type CusumDesign } from './cusum-design';
export {
	occupancyModes,
	occupancyStatistic,
	observedModes,
	occupancyStatisticFromModes,
	chiSquareUpperTail,
	binomialUpperTail,
	type OccupancyModes,
	type OccupancyTest,
	type SampledModes
} from './occupancy-model';
export { batchMeansOccupancy, type BatchMeansTest } from './occupancy-batch';
export {
	replayRun,
	Replayer,
	IncidentFold,
	replayIncidents,
	compareReplay,
	type ReplayOptions,
	type ReplayerOptions,
	type ReplayIncident,
	type ActualIncident,
	type ReplayComparison
} from './replay';
