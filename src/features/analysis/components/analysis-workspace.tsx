import { lazy, Suspense, useEffect, type ReactNode } from 'react';
import { Link, useSearchParams } from 'react-router';
import { ANALYSIS_FIGURES, type AnalysisFigure } from '#shared/schemas/analysis';
import { Alert, Loading } from '#src/components/ui/alert';
import { Panel } from '#src/components/ui/panel';
import { useAnalysisView } from '../api/analysis';
import { apiQuery, WORKSPACE_VIEWS, type WorkspaceView } from '../api/filter-state';
import { ChartSettings, ControlChartPanel, preloadControlChartPlot } from './chart-view';
import { ComparisonPanel, ComparisonSettings } from './comparison-view';
import { FilterBar } from './filter-bar';
import { LineHealthPanel } from './health-view';
import { LimitsPanel } from './limits-panel';

/** The distribution view brings the statistics library (its normal curve): a chunk of its own, like the plot. */
const preloadDistribution = () => import('./distribution-view');
const DistributionPanel = lazy(() => preloadDistribution().then((m) => ({ default: m.DistributionPanel })));

function isView(v: string | null): v is WorkspaceView {
  return WORKSPACE_VIEWS.some((w) => w.id === v);
}

function ViewState({ error, pending }: { error: Error | null; pending: boolean }) {
  if (error) return <Alert tone="fault">{error.message}</Alert>;
  if (pending) return <Loading label="Computing…" />;
  return null;
}

/** The process engineer's statistics: one filter bar, four views, everything in the URL. */
export function AnalysisWorkspace({
  canSetLimits = false,
  chartsExtra,
}: {
  /** Process engineers (and administrators) save and clear frozen limits. */
  canSetLimits?: boolean;
  /** Shown under the control charts (the watched charts, composed by the route). */
  chartsExtra?: ReactNode;
}) {
  const [params] = useSearchParams();
  const view: WorkspaceView = isView(params.get('view'))
    ? (params.get('view') as WorkspaceView)
    : 'distribution';
  const hasModel = !!params.get('model');
  const query = apiQuery(params, view);
  // Each view's heavier code is fetched as soon as the view is chosen, while its figures are computed.
  useEffect(() => {
    if (view === 'control-chart') void preloadControlChartPlot();
    if (view === 'distribution') void preloadDistribution();
  }, [view]);
  const figure = (params.get('figure') ?? 'offsetDeg') as AnalysisFigure;
  const unit = ANALYSIS_FIGURES[figure]?.unit ?? '';

  const distribution = useAnalysisView('distribution', query, hasModel && view === 'distribution');
  const chart = useAnalysisView('control-chart', query, hasModel && view === 'control-chart');
  const comparison = useAnalysisView('comparison', query, hasModel && view === 'comparison');
  const health = useAnalysisView('line-health', query, hasModel && view === 'line-health');

  const tabHref = (id: WorkspaceView) => {
    const next = new URLSearchParams(params);
    if (id === 'distribution') next.delete('view');
    else next.set('view', id);
    return `?${next.toString()}`;
  };

  return (
    <div className="flex flex-col gap-6">
      <Panel title="Filter" titleId="analysis-filter">
        <FilterBar />
      </Panel>
      {hasModel ? (
        <p>
          <a
            className="inline-flex min-h-target items-center text-copper-300 underline"
            href={`/api/analysis/calibrations.csv?${apiQuery(params, 'distribution')}`}
            download
          >
            Download the filtered calibrations (CSV, for a spreadsheet)
          </a>
          <span aria-hidden className="px-3 text-graphite-500">
            ·
          </span>
          <a
            className="inline-flex min-h-target items-center text-copper-300 underline"
            href={`/api/analysis/capability-report.pdf?${apiQuery(params, 'distribution')}`}
            target="_blank"
            rel="noreferrer"
          >
            Capability report (PDF, one page)
          </a>
        </p>
      ) : null}
      <nav aria-label="Views" className="flex flex-wrap gap-2">
        {WORKSPACE_VIEWS.map((w) => (
          <Link
            key={w.id}
            to={tabHref(w.id)}
            aria-current={w.id === view ? 'page' : undefined}
            className={`inline-flex min-h-target items-center border-2 px-4 text-lg font-semibold tracking-wide ${
              w.id === view
                ? 'border-copper-400 bg-graphite-800 text-graphite-50'
                : 'border-graphite-600 text-graphite-200 hover:border-graphite-400'
            }`}
          >
            {w.label}
          </Link>
        ))}
      </nav>
      {!hasModel ? (
        <Alert title="Choose a model">
          Every view looks at one model at a time: choose it in the filter.
        </Alert>
      ) : (
        <Panel title={WORKSPACE_VIEWS.find((w) => w.id === view)!.label} titleId="analysis-view">
          {view === 'distribution' ? (
            distribution.data ? (
              <Suspense fallback={<Loading label="Drawing…" />}>
                <DistributionPanel view={distribution.data} />
              </Suspense>
            ) : (
              <ViewState error={distribution.error} pending={distribution.isPending} />
            )
          ) : null}
          {view === 'control-chart' ? (
            <div className="flex flex-col gap-6">
              <ChartSettings />
              {chart.error ? <ViewState error={chart.error} pending={false} /> : null}
              {chart.data && !chart.error ? (
                <ControlChartPanel view={chart.data} />
              ) : (
                <ViewState error={null} pending={chart.isPending} />
              )}
              <LimitsPanel canSet={canSetLimits} unit={unit} />
              {chartsExtra}
            </div>
          ) : null}
          {view === 'comparison' ? (
            <div className="flex flex-col gap-6">
              <ComparisonSettings unit={unit} />
              {comparison.data ? (
                <ComparisonPanel view={comparison.data} />
              ) : (
                <ViewState error={comparison.error} pending={comparison.isPending} />
              )}
            </div>
          ) : null}
          {view === 'line-health' ? (
            health.data ? (
              <LineHealthPanel view={health.data} />
            ) : (
              <ViewState error={health.error} pending={health.isPending} />
            )
          ) : null}
        </Panel>
      )}
    </div>
  );
}
