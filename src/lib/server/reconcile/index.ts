// The reconciliation engine (issue 4): compares every shot with the model, fits and approves
// calibrations, and summarises sessions and rigs. Every function takes the Drizzle client or an
// open transaction first, so routes can call it inside the transaction of their own write and
// tests can run it against a scratch database. Failures meant for the user are ReconcileError
// (field, message, status 400/403/404/409).
//
//   import * as reconcile from '$lib/server/reconcile';
//
// Predictions
// - calibrationInForce(tx, rigId, projectileId): the approved calibration of the pair, or the
//   nominal η (rig) and C_D (projectile) with calibrationId null, marked uncalibrated.
// - recomputePredictions(tx, { sessionIds?, shotIds?, rigId?, projectileId? }): predict the shots
//   under the calibration in force and upsert shot_predictions (residuals, pass/fail, speed
//   basis), in pages. Call it in the transaction of every change a prediction depends on: a shot
//   logged, imported or edited; a session's geometry, conditions or plan; a rig's nominal η or a
//   projectile's nominal C_D (by rigId / projectileId) — approval does its own.
// - predictionInputsRead / predictionInputs / predictNewShot / insertPredictionIfSessionUnchanged: the same for one shot
//   being logged, inside the transaction that stores it (the fast path behind POST …/shots,
//   shots.ts; db/raw.ts).
// - judgeSpeed / judgeImpact: the pass/fail rules on their own (for live previews and tests).
//
// Calibrations
// - fitCalibration(tx, { rigId, projectileId, sessionIds, parameters, exclusions, userId, … }):
//   fit and store a draft with its exclusions (each needs a reason) and an audit event.
// - approveCalibration(tx, calibrationId, user): lead+; supersede the pair's approved calibration,
//   approve this draft and recompute the pair's residuals, in one transaction.
// - listCalibrations, calibrationExclusionsOf: reads for the calibration pages.
//
// Statistics
// - sessionStatistics(tx, sessionId): speed, group, bias, drift and plan counts of a session.
// - rigStatistics(tx, rigId, { from?, to?, now? }): the same per session in date order, and the
//   approved calibration's age per projectile.
//
// Setup sheets
// - chanceOfMeetingPlanForSetup(tx, { rigId, projectileId, testPlanId | plan, setup, seed? }):
//   seeded Monte Carlo chance of meeting the plan, with the dispersion it used.
export { ReconcileError, type ReconcileErrorStatus } from './errors';
export {
	calibrationInForce,
	STORED_KEY,
	summaryOf,
	type CalibrationInForce,
	type CalibrationRow,
	type CalibrationSummary,
	type Executor,
	type StoredParameterKey
} from './model';
export {
	judgeImpact,
	judgeSpeed,
	PREDICTION_PAGE_SIZE,
	insertPredictionIfInputsUnchanged,
	insertPredictionIfSessionUnchanged,
	inputVersions,
	INSERTED_SHOT_ID_VARIABLE,
	type InputVersions,
	predictionInputsRead,
	predictionInputs,
	predictNewShot,
	recomputePredictions,
	type PredictionInputRows,
	type PredictedShot,
	type PredictionInputs,
	type ShotPrediction,
	type RecomputeResult,
	type RecomputeSelection,
	type SpeedJudgement
} from './predict';
export {
	approveCalibration,
	calibrationExclusionsOf,
	DEFAULT_MEASUREMENT_SDS,
	fitCalibration,
	listCalibrations,
	type ApprovalResult,
	type ExclusionInput,
	type FitCalibrationInput,
	type FitCalibrationResult,
	type FitReport,
	type ParameterLine
} from './calibrate';
export {
	rigStatistics,
	sessionStatistics,
	statisticsOf,
	type PlanCounts,
	type ResidualDrift,
	type ResidualKind,
	type RigCalibrationAge,
	type RigStatistics,
	type SessionStatistics,
	type ShotWithPrediction
} from './statistics';
export {
	chanceOfMeetingPlanForSetup,
	DEFAULT_CHANCE_SEED,
	DISPERSION_RECENT_SESSIONS,
	estimateDispersion,
	pooledWithinSd,
	type ChanceForSetup,
	type ChanceForSetupInput,
	type DispersionEstimate,
	type SetupInput
} from './chance';
export type { ParameterName, MeasurementSds } from '$lib/physics/launcher';
