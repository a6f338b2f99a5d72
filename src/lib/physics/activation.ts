// The activation rate model the monitor compares against, W = W0·exp(−A/(2n̄+1)): its types in
// activation-model.ts, its prediction band (activation-predict.ts), the regressions (activation-regression.ts) and its
// fits from an operator's calibration table or from simulated rates (activation-fit.ts).
export * from './activation-model';
export { operatingPointScale, predictRate } from './activation-predict';
export { fitActivation, fitFromSimulation, type ActivationFitOptions } from './activation-fit';
