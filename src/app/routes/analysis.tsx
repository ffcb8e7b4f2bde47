import { PageHeader } from '../../components/ui/panel';
import { AnalysisWorkspace } from '../../features/analysis/components/analysis-workspace';

export function Component() {
  return (
    <div>
      <title>Line statistics · Phasewright</title>
      <PageHeader
        title="Line statistics"
        lead="Offsets across stations, lots and time: distribution and capability, control charts with run rules, comparisons and line health."
      />
      <AnalysisWorkspace />
    </div>
  );
}
