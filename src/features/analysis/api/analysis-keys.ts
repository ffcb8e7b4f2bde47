/** Query keys of the line statistics; every view's key carries its whole query, so a filter change refetches. */
export const analysisKeys = {
  all: ['analysis'] as const,
  models: () => [...analysisKeys.all, 'models'] as const,
  options: (model: string) => [...analysisKeys.all, 'options', model] as const,
  views: () => [...analysisKeys.all, 'view'] as const,
  view: (name: string, query: string) => [...analysisKeys.views(), name, query] as const,
  limits: (model: string, station: string, figure: string) =>
    [...analysisKeys.all, 'limits', model, station, figure] as const,
};
