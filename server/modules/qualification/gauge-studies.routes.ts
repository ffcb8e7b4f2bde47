import { z } from 'zod';
import type { AppDeps } from '../../deps';
import { route, sendPdf } from '../../lib/http';
import { gaugeStudyCreateSchema, studyMeasurementSchema } from '../../../shared/schemas/qualification';
import { renderStudyReport } from './qualification.pdf';
import {
  acceptStudyReading,
  createStudy,
  listStudies,
  nextStepsAt,
  studyDetail,
} from './gauge-studies.service';

const idParams = z.object({ id: z.uuid() });

/** Gauge R&R studies: design, the stations' trials, results. */
export function gaugeStudyRoutes(deps: AppDeps) {
  return [
    route({
      method: 'get',
      path: '/api/gauge-studies',
      access: 'signed-in',
      summary: 'Gauge R&R studies, newest first',
      handler: async (_req, res) => {
        res.json({ studies: await listStudies(deps.db) });
      },
    }),
    route({
      method: 'post',
      path: '/api/gauge-studies',
      access: ['engineer'],
      summary:
        'Design a gauge R&R study: parts, appraisers (stations or operators), trials, tolerance (audited)',
      body: gaugeStudyCreateSchema,
      handler: async (req, res) => {
        const input = gaugeStudyCreateSchema.parse(req.body);
        const row = await createStudy(deps.db, req.user!, input, deps.clock());
        res.status(201).json({ study: await studyDetail(deps.db, row.id) });
      },
    }),
    route({
      method: 'get',
      path: '/api/gauge-studies/:id',
      access: 'signed-in',
      summary:
        'A gauge study: design, readings, and its results by ANOVA and average-and-range once complete',
      handler: async (req, res) => {
        res.json({ study: await studyDetail(deps.db, idParams.parse(req.params).id) });
      },
    }),
    route({
      method: 'get',
      path: '/api/gauge-studies/:id/report.pdf',
      access: 'signed-in',
      summary: 'The gauge study report (PDF): design, data, ANOVA table and results',
      handler: async (req, res) => {
        const study = await studyDetail(deps.db, idParams.parse(req.params).id);
        const pdf = await renderStudyReport(study, deps.env.PLANT_TIME_ZONE, deps.clock());
        sendPdf(res, pdf, `gauge-study-${study.id}.pdf`);
      },
    }),
    route({
      method: 'get',
      path: '/api/stations/:id/gauge-studies/next',
      access: 'signed-in',
      summary: "The next trial of each open study for a station's appraiser (the station screen's guide)",
      handler: async (req, res) => {
        res.json({ steps: await nextStepsAt(deps.db, idParams.parse(req.params).id) });
      },
    }),
    route({
      method: 'get',
      path: '/api/station/gauge-studies/next',
      access: 'station',
      summary: 'The next trial of each open study this station (or its operator) is an appraiser of',
      handler: async (req, res) => {
        res.json({ steps: await nextStepsAt(deps.db, req.station!.stationId) });
      },
    }),
    route({
      method: 'post',
      path: '/api/station/gauge-studies/:id/readings',
      access: 'station',
      summary:
        'Post a study trial (the measurement contract; a repeat of a spoiled trial names it and gives a reason)',
      body: studyMeasurementSchema,
      handler: async (req, res) => {
        const body = studyMeasurementSchema.parse(req.body);
        const out = await acceptStudyReading(
          deps.db,
          deps.clock,
          req.station!,
          idParams.parse(req.params).id,
          body,
        );
        res.status(out.repeated ? 200 : 201).json(out);
      },
    }),
  ];
}
