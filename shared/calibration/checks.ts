import type { CalibrationResult, Check } from '../schemas/calibration-result';
import type { Recipe } from '../schemas/recipe';
import type { HallSensor } from '../schemas/measurement';
import { SENSORS } from './hall-layout';

/**
 * The checks behind the verdict. Codes are stable (screens, statistics and travelers key on them);
 * each check carries the value it judged, the limit and one sentence for the operator.
 */

const f = (x: number, digits = 2) => x.toFixed(digits);

type ResultBase = Omit<CalibrationResult, 'verdict' | 'checks'>;

interface SegmentFacts {
  sign: 1 | -1;
  sensorEdges: Record<HallSensor, number>;
  result: CalibrationResult['segments'][number];
}

/** A sensor is "switching" when it gave at least half the edges its turns call for (two per turn). */
const MIN_EDGE_SHARE = 0.5;

export function buildChecks(base: ResultBase, segments: readonly SegmentFacts[], recipe: Recipe): Check[] {
  const L = recipe.limits;
  const checks: Check[] = [];

  const o = base.offsetDeg;
  const [oMin, oMax] = L.offsetDeg;
  checks.push({
    code: 'offset.within_limits',
    passed: o !== null && o >= oMin && o <= oMax,
    value: o,
    limit: [oMin, oMax],
    unit: 'deg',
    message:
      o === null
        ? 'No hall edge could be placed on the rotor angle, so no offset was measured.'
        : o >= oMin && o <= oMax
          ? `Hall offset ${f(o)}° e is inside the accepted ${oMin}° to ${oMax}°.`
          : `Hall offset ${f(o)}° e is outside the accepted ${oMin}° to ${oMax}°: check the sensor board position and the magnet ring.`,
  });

  const residuals = base.edges.filter((e) => e.residualDeg !== null);
  const worst = residuals.reduce<(typeof residuals)[number] | null>(
    (w, e) => (w === null || Math.abs(e.residualDeg!) > Math.abs(w.residualDeg!) ? e : w),
    null,
  );
  const worstAbs = worst ? Math.abs(worst.residualDeg!) : null;
  checks.push({
    code: 'edges.residual_spread',
    passed: worstAbs !== null && worstAbs <= L.edgeResidualDeg,
    value: worstAbs,
    limit: L.edgeResidualDeg,
    unit: 'deg',
    message:
      worst === null || worstAbs === null
        ? 'No hall edge residual could be measured.'
        : worstAbs <= L.edgeResidualDeg
          ? `All hall edges sit within ${f(worstAbs)}° e of the common offset (limit ${L.edgeResidualDeg}°).`
          : `Hall ${worst.sensor} ${worst.edge} edge is ${f(worst.residualDeg!)}° e away from the others (limit ${L.edgeResidualDeg}°): that sensor is misplaced or the magnet is uneven.`,
  });

  const sequenceKnown = segments.filter((s) => s.result.bemfDirection !== null);
  const swapped = sequenceKnown.filter((s) => {
    const rotor = s.result.hallDirection ?? s.result.direction;
    return s.result.bemfDirection !== rotor;
  });
  checks.push({
    code: 'bemf.phase_sequence',
    passed: swapped.length === 0,
    value: sequenceKnown.length === 0 ? null : swapped.length === 0 ? 'A-B-C' : 'A-C-B',
    limit: 'A-B-C',
    unit: '',
    message:
      sequenceKnown.length === 0
        ? 'The back-EMF phase sequence cannot be judged from a single channel; nothing else depends on it.'
        : swapped.length === 0
          ? 'The back-EMF phases come in the order A-B-C, as the hall sensors expect.'
          : 'The back-EMF phases come in the order A-C-B against the hall sensors: phases B and C are probably swapped in the winding or its connector.',
  });

  let fewest: { sensor: HallSensor; share: number } | null = null;
  for (const s of segments) {
    const expected = 2 * s.result.electricalTurns;
    for (const sensor of SENSORS) {
      const share = expected > 0 ? s.sensorEdges[sensor] / expected : 0;
      if (fewest === null || share < fewest.share) fewest = { sensor, share };
    }
  }
  const switching = fewest !== null && fewest.share >= MIN_EDGE_SHARE;
  checks.push({
    code: 'hall.all_switching',
    passed: switching,
    value: fewest ? Math.round(100 * fewest.share) : null,
    limit: 100 * MIN_EDGE_SHARE,
    unit: '%',
    message: switching
      ? 'All three hall sensors switch as the rotor turns.'
      : `Hall sensor ${fewest?.sensor} gave ${Math.round(100 * (fewest?.share ?? 0))} % of the edges expected: it is dead, disconnected or its magnet track is missing.`,
  });

  const invalid = [...new Set(segments.flatMap((s) => s.result.invalidStates))].sort();
  checks.push({
    code: 'hall.valid_states',
    passed: invalid.length === 0,
    value: invalid.length === 0 ? null : invalid.join(','),
    limit: base.validStates.join(','),
    unit: '',
    message:
      invalid.length === 0
        ? 'The hall sensors only showed the six states this layout allows.'
        : `The hall sensors showed state${invalid.length > 1 ? 's' : ''} ${invalid.join(', ')}, which this layout never produces: check the sensor wiring and the recipe's layout.`,
  });

  const wrongWay = segments.filter((s) => {
    const seen = s.result.hallDirection ?? s.result.bemfDirection;
    return seen !== null && seen !== s.result.direction;
  });
  const undetermined = segments.filter((s) => (s.result.hallDirection ?? s.result.bemfDirection) === null);
  checks.push({
    code: 'direction.as_declared',
    passed: wrongWay.length === 0 && undetermined.length === 0,
    value:
      wrongWay.length > 0
        ? `segment ${wrongWay[0].result.index}`
        : undetermined.length > 0
          ? 'unknown'
          : 'as declared',
    limit: 'as declared',
    unit: '',
    message:
      wrongWay.length > 0
        ? `Segment ${wrongWay[0].result.index} was declared ${wrongWay[0].result.direction} but the rotor turned the other way: check the station's drive wiring.`
        : undetermined.length > 0
          ? `The direction of segment ${undetermined[0].result.index} could not be confirmed from the hall or back-EMF order.`
          : 'Every segment turned in the declared direction.',
  });

  const [sMin, sMax] = L.speedRpm;
  const outOfWindow = segments.find((s) => s.result.speedRpm < sMin || s.result.speedRpm > sMax);
  const shown = outOfWindow ?? segments[0];
  checks.push({
    code: 'speed.within_window',
    passed: outOfWindow === undefined,
    value: shown.result.speedRpm,
    limit: [sMin, sMax],
    unit: 'rpm',
    message: outOfWindow
      ? `Segment ${outOfWindow.result.index} ran at ${Math.round(outOfWindow.result.speedRpm)} rpm, outside ${sMin} to ${sMax} rpm: check the drive speed setting.`
      : `Speed was inside ${sMin} to ${sMax} rpm in every segment.`,
  });

  const minTurns = Math.min(...segments.map((s) => s.result.electricalTurns));
  checks.push({
    code: 'turns.enough',
    passed: minTurns >= L.minElectricalRevs,
    value: minTurns,
    limit: L.minElectricalRevs,
    unit: 'turns',
    message:
      minTurns >= L.minElectricalRevs
        ? `Every segment covered at least ${f(minTurns, 1)} electrical turns (need ${L.minElectricalRevs}).`
        : `A segment covered only ${f(minTurns, 1)} electrical turns (need ${L.minElectricalRevs}): capture for longer.`,
  });

  if (L.fitResidualDeg !== undefined) {
    const ok = base.fitResidualDeg <= L.fitResidualDeg;
    checks.push({
      code: 'fit.residual',
      passed: ok,
      value: base.fitResidualDeg,
      limit: L.fitResidualDeg,
      unit: 'deg',
      message: ok
        ? `The back-EMF crossings follow the fitted rotor angle within ${f(base.fitResidualDeg, 3)}° RMS.`
        : `The back-EMF crossings scatter ${f(base.fitResidualDeg, 3)}° RMS about the rotor angle (limit ${L.fitResidualDeg}°): winding imbalance or a noisy detector.`,
    });
  }

  if (L.speedVariationPct !== undefined) {
    const ok = base.speedVariationPct <= L.speedVariationPct;
    checks.push({
      code: 'speed.variation',
      passed: ok,
      value: base.speedVariationPct,
      limit: L.speedVariationPct,
      unit: '%',
      message: ok
        ? `Speed varied ${f(base.speedVariationPct, 1)} % within a segment (limit ${L.speedVariationPct} %).`
        : `Speed varied ${f(base.speedVariationPct, 1)} % within a segment (limit ${L.speedVariationPct} %): the drive is not holding speed.`,
    });
  }
  return checks;
}

export function verdictOf(checks: readonly Check[]): 'pass' | 'fail' {
  return checks.every((c) => c.passed) ? 'pass' : 'fail';
}
