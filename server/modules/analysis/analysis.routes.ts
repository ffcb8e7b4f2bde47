import { z } from 'zod';
import type { AppDeps } from '../../deps';
import { defineRoute, sendPdf } from '../../lib/http';
import type { Access } from '../../../shared/schemas/roles';
import {
  analysisFilterSchema,
  comparisonQuerySchema,
  controlChartQuerySchema,
} from '../../../shared/schemas/analysis';
import { writeCalibrationsCsv } from './analysis.export';
import { capabilityReport } from './analysis.service';
import {
  analysisOptions,
  comparisonView,
  controlChartView,
  distributionView,
  lineHealthView,
} from './analysis.service';

/**
 * Line statistics are read by process engineers (their daily work) and quality staff (capability evidence,
 * tracing a lot); administrators pass every role check.
 */
export const ANALYSIS_ACCESS = ['engineer', 'quality'] as const satisfies Access;

const optionsQuery = z.object({ model: z.uuid('Choose a model') });

export function analysisRoutes(deps: AppDeps) {
  return [
    defineRoute({
      method: 'get',
      path: '/api/analysis/options',
      access: ANALYSIS_ACCESS,
      summary: 'Stations, lots, operators and recipe versions with calibrations of a model (for the filter)',
      request: { query: optionsQuery },
      handle: async ({ query }, res) => {
        res.json(await analysisOptions(deps.db, query.model));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/analysis/distribution',
      access: ANALYSIS_ACCESS,
      summary: 'Distribution, normality test and capability of a figure over the filtered calibrations',
      request: { query: analysisFilterSchema },
      handle: async ({ query }, res) => {
        res.json(await distributionView(deps.db, query));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/analysis/control-chart',
      access: ANALYSIS_ACCESS,
      summary: 'I-MR, X̄-R, X̄-S or EWMA chart of the filtered calibrations with run-rule violations',
      request: { query: controlChartQuerySchema },
      handle: async ({ query }, res) => {
        res.json(await controlChartView(deps.db, query));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/analysis/comparison',
      access: ANALYSIS_ACCESS,
      summary: 'Groups (station, lot, operator, recipe version) compared with a one-way test',
      request: { query: comparisonQuerySchema },
      handle: async ({ query }, res) => {
        res.json(await comparisonView(deps.db, query));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/analysis/line-health',
      access: ANALYSIS_ACCESS,
      summary: 'First-pass yield and retest rate per station per day, failed checks, placement trends',
      request: { query: analysisFilterSchema },
      handle: async ({ query }, res) => {
        res.json(await lineHealthView(deps.db, query));
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/analysis/capability-report.pdf',
      access: ANALYSIS_ACCESS,
      summary: 'One-page capability report (PDF) of a figure for the filter',
      request: { query: analysisFilterSchema },
      handle: async ({ query, caller }, res) => {
        const pdf = await capabilityReport(
          deps.db,
          deps.clock,
          caller.user,
          query,
        );
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
        const filter = query;
        res.setHeader('Content-Type', 'text/csv; charset=utf-8');
        res.setHeader('Content-Disposition', 'attachment; filename="calibrations.csv"');
        await writeCalibrationsCsv(deps.pool, filter, res);
        res.end();
      },
    }),
  ];
}
