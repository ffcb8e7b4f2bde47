/**
 * The workspace's state lives in the URL query string, so a view can be shared and the back button works.
 * Filter keys are the API's own (lists comma-separated); view settings (chart kind, grouping…) sit beside them.
 */
export const FILTER_KEYS = [
  'model',
  'stations',
  'hallBoardLots',
  'magnetRingLots',
  'statorLots',
  'recipeVersions',
  'operators',
  'from',
  'to',
  'verdict',
  'attempts',
  'purpose',
  'figure',
] as const;

export const VIEW_KEYS = {
  distribution: [] as string[],
  'control-chart': ['chart', 'subgroupSize', 'lambda', 'L', 'ruleSet', 'baselineFrom', 'baselineTo'],
  comparison: ['by', 'threshold'],
  'line-health': [] as string[],
} as const;

export type WorkspaceView = keyof typeof VIEW_KEYS;
export const WORKSPACE_VIEWS: { id: WorkspaceView; label: string }[] = [
  { id: 'distribution', label: 'Distribution and capability' },
  { id: 'control-chart', label: 'Control charts' },
  { id: 'comparison', label: 'Comparisons' },
  { id: 'line-health', label: 'Line health' },
];

/** The API query string of a view: the filter plus that view's own settings, in a stable order. */
export function apiQuery(params: URLSearchParams, view: WorkspaceView): string {
  const out = new URLSearchParams();
  for (const key of [...FILTER_KEYS, ...VIEW_KEYS[view]]) {
    const value = params.get(key);
    if (value) out.set(key, value);
  }
  // Time presets are resolved when the view is opened, so "the last 7 days" moves with the clock.
  const preset = params.get('range');
  if (preset && preset !== 'custom' && preset !== 'all') {
    const hours = RANGE_HOURS[preset as keyof typeof RANGE_HOURS];
    if (hours) {
      const now = Date.now();
      // Round to the minute so that the query key stays stable while a view is open.
      const end = Math.ceil(now / 60_000) * 60_000;
      out.set('from', new Date(end - hours * 3_600_000).toISOString());
      out.delete('to');
    }
  }
  return out.toString();
}

export const RANGE_HOURS = { shift: 8, day: 24, week: 24 * 7, month: 24 * 30 } as const;
export const RANGE_LABELS: Record<string, string> = {
  all: 'Everything recorded',
  shift: 'Last shift (8 hours)',
  day: 'Last 24 hours',
  week: 'Last 7 days',
  month: 'Last 30 days',
  custom: 'Custom range',
};
