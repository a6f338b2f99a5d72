// The detector engine and its rules: pure, deterministic, shared by live ingest and replay.
export * from './events';
export * from './rules';
export type { Detector, DetectorContext, RunInfo } from './detector';
export { DetectorEngine, detectAll, SNAPSHOT_FORMAT, type EngineSnapshot, type OpenCondition } from './engine';
export { acceptSignal, isOpen } from './open-set';
export { lockLost, hasPhaseShots, LOCK_EVIDENCE_WINDOWS, type LockLostState } from './lock-lost';
export { agentSilent, type AgentSilentState } from './agent-silent';
