import { useStudyNextSteps } from '../api/qualification';

/** On the station screen: the next trial of each open gauge study this station (or its operator) is part of. */
export function StudyGuide({ stationId }: { stationId: string }) {
  const q = useStudyNextSteps(stationId);
  if (!q.data?.length) return null;
  return (
    <section
      aria-labelledby="study-guide-title"
      className="border-l-8 border-copper-400 bg-graphite-850 p-4"
      data-testid="study-guide"
    >
      <h2 id="study-guide-title" className="text-xl font-bold text-graphite-50">
        Gauge study in progress
      </h2>
      <ul className="mt-1 flex flex-col gap-1">
        {q.data.map((s) => (
          <li key={s.studyId} className="text-lg text-graphite-100">
            {s.serial ? (
              <>
                <span className="font-semibold">{s.studyName}</span>: scan part{' '}
                <span className="font-mono text-copper-200">{s.serial}</span> (part {s.part}), trial {s.trial}{' '}
                of {s.trials}. {s.doneByAppraiser} of {s.totalByAppraiser} done by {s.appraiserLabel}.
              </>
            ) : s.totalByAppraiser === 0 ? (
              <>
                <span className="font-semibold">{s.studyName}</span>: waiting for one of its operators to sign
                in here ({s.waitingFor.join(', ')}). {s.done} of {s.total} readings taken.
              </>
            ) : (
              <>
                <span className="font-semibold">{s.studyName}</span>: {s.appraiserLabel} has measured every
                trial ({s.done} of {s.total} in the study).
                {s.waitingFor.length ? ` Next, hand the station to ${s.waitingFor.join(' or ')}.` : ''}
              </>
            )}
          </li>
        ))}
      </ul>
      <p className="mt-1 text-graphite-300">
        Study readings do not change the unit, count as production or print a traveler.
      </p>
    </section>
  );
}
