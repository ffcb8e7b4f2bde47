import type { LineHealthView as View } from '#shared/schemas/analysis';
import { TableFrame, Td, Th } from '#src/components/ui/data-table';
import { fmt } from './stat-format';

export function LineHealthPanel({ view }: { view: View }) {
  const most = Math.max(1, ...view.failedChecks.map((f) => f.count));
  return (
    <div className="flex flex-col gap-8">
      <section aria-labelledby="pareto-title" className="flex flex-col gap-3">
        <h3 id="pareto-title" className="text-xl font-semibold text-graphite-50">
          Why units failed (most frequent first)
        </h3>
        {view.failedChecks.length === 0 ? (
          <p className="text-graphite-300">No failed check in the filter.</p>
        ) : (
          <ul className="flex max-w-3xl flex-col gap-2">
            {view.failedChecks.map((f) => (
              <li key={f.code} className="grid grid-cols-[16rem_1fr_5rem] items-center gap-3">
                <span className="text-graphite-100">{f.label}</span>
                <span aria-hidden className="h-4 bg-fault" style={{ width: `${(100 * f.count) / most}%` }} />
                <span className="text-right tabular-nums">{f.count} units</span>
              </li>
            ))}
          </ul>
        )}
      </section>
      <TableFrame caption="First-pass yield and retest rate per station per day (UTC days)">
        <thead>
          <tr>
            <Th>Day</Th>
            <Th>Station</Th>
            <Th>Units</Th>
            <Th>First-pass yield</Th>
            <Th>Retest rate</Th>
            <Th>Programming mismatches</Th>
          </tr>
        </thead>
        <tbody>
          {view.days.map((d) => (
            <tr key={`${d.day}-${d.stationId}`}>
              <Td className="whitespace-nowrap">{d.day}</Td>
              <Td>{d.station}</Td>
              <Td className="tabular-nums">{d.units}</Td>
              <Td
                className={`tabular-nums ${d.firstPassYieldPct !== null && d.firstPassYieldPct < 90 ? 'font-semibold text-fault-bright' : ''}`}
              >
                {fmt(d.firstPassYieldPct, '%', 1)}
              </Td>
              <Td className="tabular-nums">{fmt(d.retestRatePct, '%', 1)}</Td>
              <Td className="tabular-nums">{d.programmingMismatches}</Td>
            </tr>
          ))}
        </tbody>
      </TableFrame>
      <TableFrame caption="Daily mean placement residual of each hall sensor">
        <thead>
          <tr>
            <Th>Day</Th>
            <Th>Sensor A</Th>
            <Th>Sensor B</Th>
            <Th>Sensor C</Th>
          </tr>
        </thead>
        <tbody>
          {view.placementTrend.map((p) => (
            <tr key={p.day}>
              <Td className="whitespace-nowrap">{p.day}</Td>
              <Td className="tabular-nums">{fmt(p.aDeg, '°', 3)}</Td>
              <Td className="tabular-nums">{fmt(p.bDeg, '°', 3)}</Td>
              <Td className="tabular-nums">{fmt(p.cDeg, '°', 3)}</Td>
            </tr>
          ))}
        </tbody>
      </TableFrame>
    </div>
  );
}
