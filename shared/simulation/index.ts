export { createRng, type Rng } from './rng';
export { buildMotion, type Motion, type MotionProfile } from './motion';
export {
  channelZeroAngles,
  simulateMeasurement,
  type SegmentTruth,
  type SimSegmentSpec,
  type SimulatedMeasurement,
  type SimulationSpec,
  type SimulationTruth,
} from './simulate';
export { simulateCapture, type CaptureSimSpec, type SimulatedCapture } from './capture-sim';
export { exampleCaptureCsv, exampleMeasurement, exampleRecipe } from './examples';
