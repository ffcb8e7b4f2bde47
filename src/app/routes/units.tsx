import { PageHeader, Panel } from '#src/components/ui/panel';
import { UnitSearch } from '#src/features/units/components/unit-search';

export function Component() {
  return (
    <div>
      <title>Units · Phasewright</title>
      <PageHeader
        title="Units"
        lead="Look a unit up by its serial: its model and lots, every calibration, and its travelers."
      />
      <Panel className="max-w-2xl">
        <UnitSearch autoFocus />
      </Panel>
    </div>
  );
}
