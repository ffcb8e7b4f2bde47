import { SAFETY_CAUTIONS, SAFETY_TITLE } from '#shared/wording';

/** The cautions for back-driven motors (the same words as on the traveler): always on screen, never in the way. */
export function SafetyCautions() {
  return (
    <aside
      aria-labelledby="cautions-title"
      className="border-l-4 border-warn bg-graphite-900 p-3 text-sm text-graphite-200"
      data-testid="safety-cautions"
    >
      <h2
        id="cautions-title"
        className="mb-1.5 flex items-center gap-2 font-semibold tracking-wide text-warn uppercase"
      >
        <svg width="16" height="16" viewBox="0 0 12 12" aria-hidden>
          <path d="M6 0.8 11.4 11H0.6Z" fill="currentColor" />
          <path d="M6 4.2v3.6M6 8.8v1" stroke="var(--color-graphite-950)" strokeWidth="1.3" />
        </svg>
        {SAFETY_TITLE}
      </h2>
      <ul className="flex list-disc flex-col gap-1 pl-4 marker:text-warn">
        {SAFETY_CAUTIONS.map((caution) => (
          <li key={caution}>{caution}</li>
        ))}
      </ul>
    </aside>
  );
}
