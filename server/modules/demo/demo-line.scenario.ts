import type { Recipe } from '#shared/schemas/recipe';

/**
 * The invented demo line: Corvane Motion Ltd, Hollin Ridge Works, Line 2. Two motor models, three
 * end-of-line stations, component lots, and the two stories the fortnight of data tells: station
 * EOL-23's back-EMF detector slowly gets slower (its filter ages), and hall-board lot HB-2446-C was
 * assembled with the sensors rotated a few degrees. Pure data: the seed, the station simulator and
 * the line benchmark all read it.
 */

export const DEMO_LINE = 'Line 2';

/** How a motor model's units come off the line (the physics the station sees; not the recipe). */
export interface DemoMotorPhysics {
  /** Mean and spread of the true geometric hall offset, electrical degrees. */
  offsetMeanDeg: number;
  offsetSdDeg: number;
  /** Spread of each sensor's own placement error and of its rise-vs-fall (duty) error, degrees. */
  sensorSdDeg: number;
  dutySdDeg: number;
  /** Spread of the magnet ring's per-pole-pair magnetisation error, degrees. */
  polePairSdDeg: number;
  /** Hall hysteresis range, degrees, and switching latency range, µs. */
  hysteresisDeg: [number, number];
  latencyUs: [number, number];
  /** The coast-down the station's drive leaves the rotor in: start speed range and end/start ratio. */
  coastStartRpm: [number, number];
  coastEndRatio: number;
}

export interface DemoModel {
  code: string;
  name: string;
  polePairs: number;
  recipe: Recipe;
  physics: DemoMotorPhysics;
}

/** Electrical turns the stations record per direction (the recipes ask for at least 10). */
export const DEMO_TURNS_PER_SEGMENT = 14;

export const DEMO_MODELS: DemoModel[] = [
  {
    code: 'CV-57B',
    name: 'CV-57B 57 mm brushless, 24 V, 180 W',
    polePairs: 4,
    recipe: {
      name: 'CV-57B end-of-line hall calibration',
      polePairs: 4,
      hallRiseDeg: { A: 30, B: 150, C: 270 },
      bemfDelayUs: 3,
      debounceUs: 1,
      countsPerTurn: 65536,
      countsSigned: true,
      maxAttempts: 3,
      limits: {
        offsetDeg: [-10, 10],
        edgeResidualDeg: 2.5,
        speedRpm: [1500, 4000],
        minElectricalRevs: 10,
        fitResidualDeg: 1,
      },
    },
    physics: {
      offsetMeanDeg: 2.4,
      offsetSdDeg: 1.1,
      sensorSdDeg: 0.35,
      dutySdDeg: 0.2,
      polePairSdDeg: 0.25,
      hysteresisDeg: [0.3, 0.6],
      latencyUs: [1, 2.5],
      coastStartRpm: [2900, 3100],
      coastEndRatio: 0.8,
    },
  },
  {
    code: 'CV-86S',
    name: 'CV-86S 86 mm servo motor, 48 V, 400 W',
    polePairs: 5,
    recipe: {
      name: 'CV-86S end-of-line hall calibration',
      polePairs: 5,
      hallRiseDeg: { A: 0, B: 120, C: 240 },
      bemfDelayUs: 3,
      debounceUs: 1,
      countsPerTurn: 65536,
      countsSigned: true,
      maxAttempts: 3,
      limits: {
        offsetDeg: [-10, 10],
        edgeResidualDeg: 2.5,
        speedRpm: [1000, 3500],
        minElectricalRevs: 10,
        fitResidualDeg: 1,
      },
    },
    physics: {
      offsetMeanDeg: -1.8,
      offsetSdDeg: 1.3,
      sensorSdDeg: 0.4,
      dutySdDeg: 0.2,
      polePairSdDeg: 0.3,
      hysteresisDeg: [0.3, 0.6],
      latencyUs: [1, 2.5],
      coastStartRpm: [2300, 2500],
      coastEndRatio: 0.8,
    },
  },
];

/** A station rig: what it measures and how its timing behaves. */
export interface DemoRig {
  /** Both directions separate geometry from lag; a forward-only rig folds every delay into the offset. */
  directions: 'both' | 'forward';
  /** The detector delay the recipe assumes is 3 µs; this is what the rig really has, µs. */
  detectorDelayUs: number;
  /** Growth of the detector delay over the fortnight, µs (a drift only a forward-only rig shows). */
  detectorDriftUs: number;
  jitterUs: number;
}

export interface DemoStation {
  name: string;
  modelCodes: string[];
  rig: DemoRig;
  /** Share of each allowed model's units this station measures. */
  share: Record<string, number>;
}

export const DEMO_STATIONS: DemoStation[] = [
  {
    name: 'EOL-21',
    modelCodes: ['CV-57B'],
    rig: { directions: 'both', detectorDelayUs: 3, detectorDriftUs: 0, jitterUs: 0.6 },
    share: { 'CV-57B': 0.65 },
  },
  {
    name: 'EOL-22',
    modelCodes: ['CV-86S'],
    rig: { directions: 'both', detectorDelayUs: 3.2, detectorDriftUs: 0, jitterUs: 0.6 },
    share: { 'CV-86S': 0.65 },
  },
  {
    name: 'EOL-23',
    modelCodes: ['CV-57B', 'CV-86S'],
    rig: { directions: 'forward', detectorDelayUs: 3, detectorDriftUs: 52, jitterUs: 0.8 },
    share: { 'CV-57B': 0.35, 'CV-86S': 0.35 },
  },
];

/** The station whose detector drifts over the fortnight, and the single-model station station:sim uses. */
export const DRIFTING_STATION = 'EOL-23';
export const DEMO_SIM_STATION = 'EOL-21';

export interface DemoLot {
  code: string;
  /** Extra rotation of all three sensors for units built with this lot, degrees. */
  shiftDeg: number;
}

/** Lots in the order they were received; production draws from a window that moves through them. */
export const DEMO_HALL_BOARD_LOTS: DemoLot[] = [
  { code: 'HB-2445-A', shiftDeg: 0 },
  { code: 'HB-2445-B', shiftDeg: 0 },
  { code: 'HB-2446-A', shiftDeg: 0 },
  { code: 'HB-2446-C', shiftDeg: 4 },
  { code: 'HB-2447-A', shiftDeg: 0 },
  { code: 'HB-2447-B', shiftDeg: 0 },
];
export const OFF_HALL_BOARD_LOT = 'HB-2446-C';
export const DEMO_MAGNET_RING_LOTS = ['MR-2444-1', 'MR-2444-2', 'MR-2445-1', 'MR-2446-1'];
export const DEMO_STATOR_LOTS = ['ST-2443-A', 'ST-2444-A', 'ST-2445-B', 'ST-2446-A'];

/** Key label of the demo station key `npm start` creates afresh on every start. */
export const DEMO_KEY_LABEL = 'station:sim demo key (npm start)';

export function demoModel(code: string): DemoModel {
  const model = DEMO_MODELS.find((m) => m.code.toUpperCase() === code.toUpperCase());
  if (!model) {
    throw new Error(
      `Unknown demo model "${code}". Known models: ${DEMO_MODELS.map((m) => m.code).join(', ')}.`,
    );
  }
  return model;
}

export function demoStation(name: string): DemoStation {
  const station = DEMO_STATIONS.find((s) => s.name === name);
  if (!station) throw new Error(`Unknown demo station "${name}".`);
  return station;
}
