/** The cautions for back-driven motors: short, always on screen, never in the way. */
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
        Safety
      </h2>
      <ul className="flex list-disc flex-col gap-1 pl-4 marker:text-warn">
        <li>Guards closed and interlocks working before the rotor spins.</li>
        <li>A turning rotor makes voltage: the terminals are live. Hands off while it spins.</li>
        <li>
          Follow the plant&apos;s safety rules, local codes and machinery standards such as IEC 60204-1.
        </li>
      </ul>
    </aside>
  );
}
