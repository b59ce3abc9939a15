/** Which requests the service worker keeps for the technician's route (pure: tested in tests/unit). */
export const FIELD_CACHES = { pages: 'cf-field-pages', api: 'cf-field-api', backdrops: 'cf-field-backdrops' } as const;

/** The route page and its print sheet, as HTML or as SvelteKit's __data.json. */
export const isFieldPage = (path: string) => /^\/networks\/\d+\/field(\/print)?(\/__data\.json)?\/?$/.test(path);
/** The technician's task list in the API. */
export const isFieldApi = (path: string) => /^\/api\/v1\/networks\/\d+\/tasks$/.test(path);
/** The importance backdrop of the route map. */
export const isRouteBackdrop = (path: string) => /^\/api\/v1\/networks\/\d+\/map\/importance\.png$/.test(path);
