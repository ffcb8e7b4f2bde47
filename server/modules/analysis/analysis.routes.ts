import { z } from 'zod';
import type { AppDeps } from '#server/deps';
import { defineRoute, sendPdf } from '#server/lib/http';
import type { Access } from '#shared/schemas/roles';
import {
  analysisFilterSchema,
  clearLimitsSchema,
  comparisonQuerySchema,
  controlChartQuerySchema,
  freezeLimitsSchema,
  limitHistorySchema,
  limitScopeQuerySchema,
  limitSetViewSchema,
} from '#shared/schemas/analysis';
import { clearLimits, freezeLimits, limitHistory } from './control-limits.service';
import { writeCalibrationsCsv } from './analysis.export';
import { capabilityReport } from './analysis.service';
import {
  analysisOptions,
  comparisonView,
  distributionView,
  lineHealthView,
  readPlantTime,
  resolveRange,
} from './analysis.service';
import { controlChartView } from './control-chart.service';
import type { AnalysisFilter } from '#shared/schemas/analysis';

/**
 * Line statistics are read by process engineers (their daily work) and quality staff (capability evidence,
 * tracing a lot); administrators pass every role check.
 */
export const ANALYSIS_ACCESS = ['engineer', 'quality'] as const satisfies Access;

/** Frozen control limits are the process engineer's to set (administrators pass every role list). */
const LIMITS_ACCESS = ['engineer'] as const satisfies Access;

const optionsQuery = z.object({ model: z.uuid('Choose a model') });

export function analysisRoutes(deps: AppDeps) {
  /** The filter with its time preset resolved now, in the plant's zone, and the plant's time settings. */
  const resolved = async <F extends AnalysisFilter>(filter: F) => {
    const time = await readPlantTime(deps.db, deps.env.PLANT_TIME_ZONE);
    return { filter: resolveRange(filter, deps.clock(), time), time };
  };
  return [
    defineRoute({
      method: 'get',
      path: '/api/analysis/options',
      access: ANALYSIS_ACCESS,
      summary: 'Stations, lots, operators and recipe versions with calibrations of a model (for the filter)',
      request: { query: optionsQuery },
      handle: async ({ query }, res) => {
        res.json(await analysisOptions(deps.readDb, query.model, deps.env.PLANT_TIME_ZONE));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/analysis/distribution',
      access: ANALYSIS_ACCESS,
      summary: 'Distribution, normality test and capability of a figure over the filtered calibrations',
      request: { query: analysisFilterSchema },
      handle: async ({ query }, res) => {
        res.json(await distributionView(deps.readDb, (await resolved(query)).filter));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/analysis/control-chart',
      access: ANALYSIS_ACCESS,
      summary: 'I-MR, X̄-R, X̄-S or EWMA chart of the filtered calibrations with run-rule violations',
      request: { query: controlChartQuerySchema },
      handle: async ({ query }, res) => {
        const { filter, time } = await resolved(query);
        res.json(await controlChartView(deps.readDb, filter, time));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/analysis/limits',
      access: ANALYSIS_ACCESS,
      summary:
        'Frozen control limits of a station (or the model) and a figure: the ones in force and every version',
      request: { query: limitScopeQuerySchema },
      responses: { 200: { description: 'Limits in force and versions', schema: limitHistorySchema } },
      handle: async ({ query }, res) => {
        res.json(await limitHistory(deps.db, query));
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/analysis/limits',
      access: LIMITS_ACCESS,
      summary: 'Freeze control limits from a baseline window (a new version, audited)',
      request: { body: freezeLimitsSchema },
      responses: { 201: { description: 'The saved version', schema: limitSetViewSchema } },
      handle: async ({ body, caller }, res) => {
        res.status(201).json(await freezeLimits(deps.db, deps.clock, caller.user, body));
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/analysis/limits/clear',
      access: LIMITS_ACCESS,
      summary: 'Return a scope to limits computed from the data shown (a clearing version, audited)',
      request: { body: clearLimitsSchema },
      responses: { 201: { description: 'The clearing version', schema: limitSetViewSchema } },
      handle: async ({ body, caller }, res) => {
        res.status(201).json(await clearLimits(deps.db, deps.clock, caller.user, body));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/analysis/comparison',
      access: ANALYSIS_ACCESS,
      summary: 'Groups (station, lot, operator, recipe version) compared with a one-way test',
      request: { query: comparisonQuerySchema },
      handle: async ({ query }, res) => {
        res.json(await comparisonView(deps.readDb, (await resolved(query)).filter));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/analysis/line-health',
      access: ANALYSIS_ACCESS,
      summary: 'First-pass yield and retest rate per station per day, failed checks, placement trends',
      request: { query: analysisFilterSchema },
      handle: async ({ query }, res) => {
        res.json(await lineHealthView(deps.readDb, (await resolved(query)).filter));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/analysis/capability-report.pdf',
      access: ANALYSIS_ACCESS,
      summary: 'One-page capability report (PDF) of a figure for the filter',
      request: { query: analysisFilterSchema },
      handle: async ({ query, caller }, res) => {
        const pdf = await capabilityReport(deps.readDb, deps.clock, caller.user, query);
        sendPdf(res, pdf, 'capability-report.pdf');
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/analysis/calibrations.csv',
      access: ANALYSIS_ACCESS,
      summary: 'The filtered calibrations as CSV (streamed; units in the headers)',
      request: { query: analysisFilterSchema },
      handle: async ({ query }, res) => {
        const { filter } = await resolved(query);
        res.setHeader('Content-Type', 'text/csv; charset=utf-8');
        res.setHeader('Content-Disposition', 'attachment; filename="calibrations.csv"');
        await writeCalibrationsCsv(deps.readPool, filter, res);
        res.end();
      },
    }),
  ];
}
