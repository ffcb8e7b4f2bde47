export {
  describe,
  describeFromSums,
  histogram,
  mean,
  sampleSd,
  quantileSorted,
  type Description,
  type HistogramBin,
} from './descriptive';
export { andersonDarling, type AndersonDarling } from './normality';
export { normalCdf, normalPdf, normalQuantile, chiSquareQuantile, tQuantile } from './distributions';
export { chartConstants, c4, MIN_SUBGROUP, MAX_SUBGROUP, type ChartConstants } from './constants';
export {
  capability,
  capabilityFromFigures,
  cpInterval,
  cpkInterval,
  readCapability,
  sigmaFromMovingRange,
  sigmaFromSubgroups,
  type Capability,
  type CapabilityReading,
  type Interval,
  type SpecLimits,
} from './capability';
export {
  clipForEwma,
  consecutiveSubgroups,
  EWMA_CLIP_SIGMA,
  ewmaChart,
  ewmaSigma,
  ewmaStep,
  individualsChart,
  subgroupChart,
  type Baseline,
  type ChartLine,
  type EwmaChart,
  type EwmaOptions,
  type EwmaState,
  type ShewhartChart,
} from './charts';
export {
  allRules,
  createRuleState,
  evaluateRules,
  pushRulePoint,
  RULE_COUNT,
  RULE_TEXT,
  type RuleHit,
  type RulePoint,
  type RuleSet,
  type RuleState,
} from './rules';
export {
  boxFigures,
  groupsBeyondThreshold,
  groupsBeyondThresholdFromMeans,
  kruskalWallis,
  kruskalWallisFromRanks,
  summarizeGroup,
  summarizeGroupFromFigures,
  welchAnova,
  welchAnovaFromSummaries,
  type BoxFigures,
  type GroupDifference,
  type GroupSummary,
  type OneWayTest,
} from './comparisons';
