export {
  calibrate,
  ENGINE_VERSION,
  EDGE_TYPES,
  offsetToCounts,
  separateLag,
  type EngineOptions,
} from './engine';
export {
  CalibrationInputError,
  validateCalibrationInput,
  type InputIssue,
  type ValidationOutcome,
} from './input';
export { circularMeanDeg, circularSummary, wrapDeg180, wrapDeg360, type CircularSummary } from './angles';
export { clarke, inverseClarke, park, inversePark, sixStepVectors, type TwoPhaseVector } from './clarke-park';
export {
  CROSSING_ANGLE_DEG,
  fitAngle,
  unwrapCrossings,
  crossingDirection,
  type AngleFitOptions,
} from './angle-fit';
export { deriveHallLayout, hallStateAt, nominalEdgeDeg, type HallLayout } from './hall-layout';
export { debounceHallEdges, walkHallStates } from './hall-edges';
export { IDEAL_SIX_STEP_BOUNDARIES_DEG, sixStepTorque } from './drive-impact';
export { buildChecks, verdictOf } from './checks';
