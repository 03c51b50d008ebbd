// Launcher calibration: models, starts, the fit, cross-validation, identifiability and the
// comparison of candidate models (physics.md §1, §5).
export * from './model';
export * from './start';
export * from './fit';
export * from './identifiability';
export * from './cross-validation';
export * from './compare';
export { valveFlowMuzzleSpeed, type ValveFlowInput, type ValveFlowOptions, type ValveFlowResult } from './valve-flow';
export * from './campaigns';
export * from './muzzle-curves';
