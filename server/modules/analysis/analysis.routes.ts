import { z } from 'zod';
import type { AppDeps } from '../../deps';
import { route } from '../../lib/http';
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
export const ANALYSIS_ACCESS: Access = ['engineer', 'quality'];

const optionsQuery = z.object({ model: z.uuid('Choose a model') });

export function analysisRoutes(deps: AppDeps) {
  return [
    route({
      method: 'get',
      path: '/api/analysis/options',
      access: ANALYSIS_ACCESS,
      summary: 'Stations, lots, operators and recipe versions with calibrations of a model (for the filter)',
      query: optionsQuery,
      handler: async (req, res) => {
        res.json(await analysisOptions(deps.db, optionsQuery.parse(req.query).model));
      },
    }),
    route({
      method: 'get',
      path: '/api/analysis/distribution',
      access: ANALYSIS_ACCESS,
      summary: 'Distribution, normality test and capability of a figure over the filtered calibrations',
      query: analysisFilterSchema,
      handler: async (req, res) => {
        res.json(await distributionView(deps.db, analysisFilterSchema.parse(req.query)));
      },
    }),
    route({
      method: 'get',
      path: '/api/analysis/control-chart',
      access: ANALYSIS_ACCESS,
      summary: 'I-MR, X̄-R, X̄-S or EWMA chart of the filtered calibrations with run-rule violations',
      query: controlChartQuerySchema,
      handler: async (req, res) => {
        res.json(await controlChartView(deps.db, controlChartQuerySchema.parse(req.query)));
      },
    }),
    route({
      method: 'get',
      path: '/api/analysis/comparison',
      access: ANALYSIS_ACCESS,
      summary: 'Groups (station, lot, operator, recipe version) compared with a one-way test',
      query: comparisonQuerySchema,
      handler: async (req, res) => {
        res.json(await comparisonView(deps.db, comparisonQuerySchema.parse(req.query)));
      },
    }),
    route({
      method: 'get',
      path: '/api/analysis/line-health',
      access: ANALYSIS_ACCESS,
      summary: 'First-pass yield and retest rate per station per day, failed checks, placement trends',
      query: analysisFilterSchema,
      handler: async (req, res) => {
        res.json(await lineHealthView(deps.db, analysisFilterSchema.parse(req.query)));
      },
    }),
    route({
      method: 'get',
      path: '/api/analysis/capability-report.pdf',
      access: ANALYSIS_ACCESS,
      summary: 'One-page capability report (PDF) of a figure for the filter',
      query: analysisFilterSchema,
      handler: async (req, res) => {
        const pdf = await capabilityReport(
          deps.db,
          deps.clock,
          req.user!,
          analysisFilterSchema.parse(req.query),
        );
        res.setHeader('Content-Type', 'application/pdf');
        res.setHeader('Content-Disposition', 'inline; filename="capability-report.pdf"');
        res.end(pdf);
      },
    }),
    route({
      method: 'get',
      path: '/api/analysis/calibrations.csv',
      access: ANALYSIS_ACCESS,
      summary: 'The filtered calibrations as CSV (streamed; units in the headers)',
      query: analysisFilterSchema,
      handler: async (req, res) => {
        const filter = analysisFilterSchema.parse(req.query);
        res.setHeader('Content-Type', 'text/csv; charset=utf-8');
        res.setHeader('Content-Disposition', 'attachment; filename="calibrations.csv"');
        await writeCalibrationsCsv(deps.pool, filter, res);
        res.end();
      },
    }),
  ];
}
