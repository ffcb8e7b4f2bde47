// Gauge R&R against known noise: `npm run bench:gauge`. Runs crossed studies (10 parts × 3 rigs × 3 trials)
// through the independent simulator and the calibration engine, in this process (no database), and prints
// what the product's ANOVA reports beside what the simulator was given: the parts' true offsets (their spread
// is the part variation), the rigs' timing noise and detector delays, and the repeatability found by brute
// force (one part measured 300 times on one rig). Prints figures; asserts nothing.
import { calibrate } from '#shared/calibration';
import { createRng } from '#shared/simulation/rng';
import { gaugeAnova, gaugeAverageRange, readGauge } from '#shared/statistics/gauge-study';
import { DEMO_MODELS, type DemoRig } from '#server/modules/demo/demo-line.scenario';
import { referenceUnitTruth, simulateRun } from '#server/modules/demo/demo-physics';

const model = DEMO_MODELS[0];
const parts = Array.from({ length: 10 }, (_, i) => referenceUnitTruth(model, `GS-${i + 1}`));
const rng = createRng(2026);
let id = 0;
const read = (part: (typeof parts)[number], rig: DemoRig) => {
  const m = simulateRun(model, part, { rig, attempt: 2 }, rng, { measurementId: `b-${id++}`, serial: 'GS' });
  return calibrate(m, model.recipe).offsetDeg!;
};
const sd = (xs: number[]) => {
  const m = xs.reduce((a, b) => a + b, 0) / xs.length;
  return Math.sqrt(xs.reduce((a, x) => a + (x - m) ** 2, 0) / (xs.length - 1));
};

const scenarios: { name: string; rigs: DemoRig[] }[] = [
  {
    name: 'three steady two-direction rigs, 0.6 µs timing noise',
    rigs: [
      { directions: 'both', detectorDelayUs: 3, detectorDriftUs: 0, jitterUs: 0.6 },
      { directions: 'both', detectorDelayUs: 3.2, detectorDriftUs: 0, jitterUs: 0.6 },
      { directions: 'both', detectorDelayUs: 3, detectorDriftUs: 0, jitterUs: 0.6 },
    ],
  },
  {
    name: 'the same rigs with 5 µs timing noise',
    rigs: [3, 3.2, 3].map((d) => ({
      directions: 'both' as const,
      detectorDelayUs: d,
      detectorDriftUs: 0,
      jitterUs: 5,
    })),
  },
  {
    name: 'two steady rigs and one forward-only rig with 20 µs more detector delay',
    rigs: [
      { directions: 'both', detectorDelayUs: 3, detectorDriftUs: 0, jitterUs: 0.6 },
      { directions: 'both', detectorDelayUs: 3.2, detectorDriftUs: 0, jitterUs: 0.6 },
      { directions: 'forward', detectorDelayUs: 23, detectorDriftUs: 0, jitterUs: 0.6 },
    ],
  },
];

const f = (x: number) => x.toFixed(3).padStart(7);
console.log(`Gauge R&R against known noise: ${model.code}, 10 parts × 3 rigs × 3 trials, tolerance 2°`);
console.log(
  `true part offsets: sd ${sd(parts.map((p) => p.offsetDeg)).toFixed(3)}° (the magnet-to-hall offset the simulator drew)`,
);
// What a perfect gauge reads of each part also holds its hall placement errors: the mean of 40 quiet readings.
const quiet: DemoRig = { directions: 'both', detectorDelayUs: 3, detectorDriftUs: 0, jitterUs: 0.05 };
const partValues = parts.map(
  (p) => Array.from({ length: 40 }, () => read(p, quiet)).reduce((a, b) => a + b, 0) / 40,
);
console.log(
  `part values read by a quiet rig (40 readings each): sd ${sd(partValues).toFixed(3)}° (the part variation PV should find)`,
);
for (const s of scenarios) {
  const brute = sd(Array.from({ length: 300 }, () => read(parts[0], s.rigs[0])));
  const data = parts.map((p) => s.rigs.map((rig) => [0, 1, 2].map(() => read(p, rig))));
  const a = gaugeAnova(data, { tolerance: 2 });
  const r = gaugeAverageRange(data, { tolerance: 2 });
  console.log(`\n${s.name}`);
  console.log(`  repeatability by brute force (300 runs, one part, rig 1): ${brute.toFixed(3)}°`);
  console.log(`           EV      AV      INT     GRR     PV      %GRR(TV) %GRR(tol) ndc`);
  for (const [name, g] of [
    ['ANOVA', a],
    ['avg+rng', r],
  ] as const) {
    console.log(
      `  ${name.padEnd(8)}${f(g.ev)} ${f(g.av)} ${f(g.interaction)} ${f(g.grr)} ${f(g.pv)}  ${g.percentOfTv.grr.toFixed(1).padStart(6)} %  ${g.percentOfTolerance!.grr.toFixed(1).padStart(6)} %  ${g.ndc}`,
    );
  }
  console.log(
    `  interaction ${a.interactionPooled ? 'pooled' : 'kept'} (p = ${a.interactionP.toFixed(3)}); ${readGauge(a.percentOfTv.grr, a.ndc).sentence}`,
  );
}
