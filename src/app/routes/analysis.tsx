import { useSearchParams } from 'react-router';
import { PageHeader } from '#src/components/ui/panel';
import { AnalysisWorkspace } from '#src/features/analysis/components/analysis-workspace';
import { StationBiasSection } from '#src/features/qualification/components/station-bias';
import { WatchedCharts } from '#src/features/alerts/components/watched-charts';
import { useMe } from '#src/features/auth/api/me';

export function Component() {
  const [params] = useSearchParams();
  const me = useMe();
  const role = me.data?.role;
  const engineer = role === 'engineer' || role === 'admin';
  const model = params.get('model');
  return (
    <div>
      <title>Line statistics · Phasewright</title>
      <PageHeader
        title="Line statistics"
        lead="Offsets across stations, lots and time: distribution and capability, control charts with run rules, comparisons and line health."
      />
      <AnalysisWorkspace
        canSetLimits={engineer}
        chartsExtra={model ? <WatchedCharts modelId={model} canChange={engineer} /> : null}
      />
      <div className="mt-6">
        <StationBiasSection />
      </div>
    </div>
  );
}
