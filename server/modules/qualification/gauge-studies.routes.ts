import { z } from 'zod';
import type { AppDeps } from '#server/deps';
import { defineRoute, sendPdf } from '#server/lib/http';
import { gaugeStudyCreateSchema, studyMeasurementSchema } from '#shared/schemas/qualification';
import { renderStudyReport } from './qualification.pdf';
import { acceptStudyReading, createStudy, nextStepsAt, operatorChoices } from './gauge-studies.service';
import { listStudies, studyDetail } from './gauge-study-results.service';

const idParams = z.object({ id: z.uuid() });
const json = (description: string) => ({ description, contentType: 'application/json' });

/** Gauge R&R studies: design, the stations' trials, results. */
export function gaugeStudyRoutes(deps: AppDeps) {
  return [
    defineRoute({
      method: 'get',
      path: '/api/gauge-studies',
      access: 'signed-in',
      summary: 'Gauge R&R studies, newest first',
      responses: { 200: json('`{ studies }`: summaries, newest first') },
      handle: async (_input, res) => {
        res.json({ studies: await listStudies(deps.db) });
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/gauge-studies/operators',
      access: ['engineer'],
      summary: 'Operators who may be appraisers of a study (active operator accounts)',
      responses: { 200: json('`{ operators }`: id and name, by name') },
      handle: async (_input, res) => {
        res.json({ operators: await operatorChoices(deps.db) });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/gauge-studies',
      access: ['engineer'],
      summary:
        'Design a gauge R&R study: parts, appraisers (stations or operators), trials, tolerance (audited)',
      request: { body: gaugeStudyCreateSchema },
      responses: { 201: json('`{ study }`: the study with its run order planned') },
      handle: async ({ body, caller }, res) => {
        const row = await createStudy(deps.db, caller.user, body, deps.clock());
        res.status(201).json({ study: await studyDetail(deps.db, row.id) });
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/gauge-studies/:id',
      access: 'signed-in',
      summary:
        'A gauge study: design, readings, and its results by ANOVA and average-and-range once complete',
      request: { params: idParams },
      responses: { 200: json('`{ study }`: design, readings and results') },
      handle: async ({ params }, res) => {
        res.json({ study: await studyDetail(deps.db, params.id) });
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/gauge-studies/:id/report.pdf',
      access: 'signed-in',
      summary: 'The gauge study report (PDF): design, data, ANOVA table and results',
      request: { params: idParams },
      responses: { 200: { description: 'The report', contentType: 'application/pdf' } },
      handle: async ({ params }, res) => {
        const study = await studyDetail(deps.db, params.id);
        const pdf = await renderStudyReport(study, deps.env.PLANT_TIME_ZONE, deps.clock());
        sendPdf(res, pdf, `gauge-study-${study.id}.pdf`);
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/stations/:id/gauge-studies/next',
      access: 'signed-in',
      summary: "The next trial of each open study for a station's appraiser (the station screen's guide)",
      request: { params: idParams },
      responses: { 200: json('`{ steps }`: one per open study this station or its operator is in') },
      handle: async ({ params }, res) => {
        res.json({ steps: await nextStepsAt(deps.db, params.id) });
      },
    }),
    defineRoute({
      method: 'get',
      path: '/api/station/gauge-studies/next',
      access: 'station',
      summary: 'The next trial of each open study this station (or its operator) is an appraiser of',
      responses: { 200: json('`{ steps }`: one per open study this station or its operator is in') },
      handle: async ({ caller }, res) => {
        res.json({ steps: await nextStepsAt(deps.db, caller.station.stationId) });
      },
    }),
    defineRoute({
      method: 'post',
      path: '/api/station/gauge-studies/:id/readings',
      access: 'station',
      summary:
        'Post a study trial (the measurement contract; a repeat of a spoiled trial names it and gives a reason)',
      request: { params: idParams, body: studyMeasurementSchema },
      responses: {
        201: json('`{ reading, repeated, finished }`: the trial as stored'),
        200: json('A repeated post: the stored trial'),
      },
      handle: async ({ params, body, caller }, res) => {
        const out = await acceptStudyReading(deps.db, deps.clock, caller.station, params.id, body);
        res.status(out.repeated ? 200 : 201).json(out);
      },
    }),
  ];
}
