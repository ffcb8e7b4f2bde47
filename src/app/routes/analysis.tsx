import { PageHeader } from '../../components/ui/panel';
import { AnalysisWorkspace } from '../../features/analysis/components/analysis-workspace';
import { StationBiasSection } from '../../features/qualification/components/station-bias';

export function Component() {
  return (
    <div>
      <title>Line statistics · Phasewright</title>
      <PageHeader
        title="Line statistics"
        lead="Offsets across stations, lots and time: distribution and capability, control charts with run rules, comparisons and line health."
      />
      <AnalysisWorkspace />
      <div className="mt-6">
        <StationBiasSection />
      </div>
    </div>
  );
}
