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
  'range',
  'verdict',
  'attempts',
  'purpose',
  'figure',
] as const;

export const VIEW_KEYS = {
  distribution: [] as string[],
  'control-chart': [
    'chart',
    'subgroupSize',
    'subgroupBy',
    'lambda',
    'L',
    'ruleSet',
    'baselineFrom',
    'baselineTo',
    'limits',
    'limit',
  ],
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
  // Time presets (this shift, today, 7 or 30 days) travel as they are: the server resolves them in the plant's
  // time zone when it reads the view, so "this shift" moves with the clock.
  if (out.get('range') && out.get('range') !== 'custom') {
    out.delete('from');
    out.delete('to');
  }
  return out.toString();
}

export const RANGE_LABELS: Record<string, string> = {
  all: 'Everything recorded',
  shift: 'This shift (since it started)',
  day: 'Today (since midnight)',
  week: 'Last 7 days (from midnight)',
  month: 'Last 30 days (from midnight)',
  custom: 'Custom range',
};
