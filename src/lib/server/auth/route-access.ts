/**
 * Deny by default: every route id must be listed here, or the hook answers 403 before any load
 * runs. 'public' routes are open to anyone; 'signed-in' ones need an actor. The exact permission
 * is then checked in each load, action and endpoint through the guard (./guard).
 */
export type RouteAccess = 'public' | 'signed-in';

export const ROUTE_ACCESS: Record<string, RouteAccess> = {
	'/(public)': 'public',
	'/(public)/signin': 'public',
	'/(public)/signout': 'public',
	'/(public)/reset': 'public',
	'/(public)/reset/[token]': 'public',
	'/(public)/invite/[token]': 'public',
	'/(public)/dev/inbox': 'public',
	'/(app)/networks': 'signed-in',
	'/(app)/networks/new': 'signed-in',
	'/(app)/networks/[id=id]': 'signed-in',
	'/(app)/profile': 'signed-in',
	'/(admin)/admin/users': 'signed-in',
	'/(admin)/admin/audit': 'signed-in',
	'/api/v1/networks': 'signed-in',
	'/api/v1/networks/[id=id]': 'signed-in',

	// Map
	'/(app)/networks/[id=id]/map': 'signed-in',
	'/api/v1/networks/[id=id]/map': 'signed-in',
	'/api/v1/networks/[id=id]/map/importance.png': 'signed-in',
	// (map routes end)

	// Layers and importance
	'/(app)/networks/[id=id]/layers': 'signed-in',
	'/(app)/networks/[id=id]/importance': 'signed-in',
	'/api/v1/networks/[id=id]/layers': 'signed-in',
	'/api/v1/networks/[id=id]/layers/[layerId=id]': 'signed-in',
	'/api/v1/networks/[id=id]/layers/[layerId=id]/preview.png': 'signed-in',
	'/api/v1/networks/[id=id]/recipes': 'signed-in',
	'/api/v1/networks/[id=id]/recipes/preview': 'signed-in',
	'/api/v1/networks/[id=id]/recipes/current': 'signed-in',
	'/api/v1/networks/[id=id]/recipes/[recipeId=id]': 'signed-in',
	'/api/v1/networks/[id=id]/recipes/[recipeId=id]/versions': 'signed-in',
	// (layers routes end)

	// Background jobs
	'/api/v1/networks/[id=id]/jobs/[jobId=id]': 'signed-in',
	// (jobs routes end)

	// Sensors, study area and zones
	'/(app)/networks/[id=id]/sensors': 'signed-in',
	'/(app)/networks/[id=id]/zones': 'signed-in',
	'/api/v1/networks/[id=id]/sensor-types': 'signed-in',
	'/api/v1/networks/[id=id]/sensor-types/[typeId=id]': 'signed-in',
	'/api/v1/networks/[id=id]/sensors': 'signed-in',
	'/api/v1/networks/[id=id]/sensors/[sensorId=id]': 'signed-in',
	'/api/v1/networks/[id=id]/zone-sets': 'signed-in',
	'/api/v1/networks/[id=id]/zone-sets/[zoneSetId=id]': 'signed-in',
	'/api/v1/networks/[id=id]/area': 'signed-in',
	// (sensors routes end)

	// Proposals, revisions, review and the plan
	'/(app)/networks/[id=id]/proposals': 'signed-in',
	'/(app)/networks/[id=id]/proposals/[proposalId=id]': 'signed-in',
	'/(app)/networks/[id=id]/proposals/[proposalId=id]/revisions/[revisionId=id]': 'signed-in',
	'/(app)/networks/[id=id]/proposals/[proposalId=id]/compare': 'signed-in',
	'/(app)/networks/[id=id]/history': 'signed-in',
	'/api/v1/networks/[id=id]/proposals': 'signed-in',
	'/api/v1/networks/[id=id]/proposals/[proposalId=id]': 'signed-in',
	'/api/v1/networks/[id=id]/proposals/[proposalId=id]/runs': 'signed-in',
	'/api/v1/networks/[id=id]/runs/[runId=id]': 'signed-in',
	'/api/v1/networks/[id=id]/revisions/[revisionId=id]': 'signed-in',
	'/api/v1/networks/[id=id]/revisions/[revisionId=id]/submit': 'signed-in',
	'/api/v1/networks/[id=id]/revisions/[revisionId=id]/reviews': 'signed-in',
	'/api/v1/networks/[id=id]/plan': 'signed-in',
	// (proposals routes end)

	// Field tasks and the public map
	'/(app)/networks/[id=id]/tasks': 'signed-in',
	'/(app)/networks/[id=id]/field': 'signed-in',
	'/(app)/networks/[id=id]/field/print': 'signed-in',
	'/api/v1/networks/[id=id]/tasks': 'signed-in',
	'/api/v1/networks/[id=id]/tasks.gpx': 'signed-in',
	'/api/v1/networks/[id=id]/tasks/assignments': 'signed-in',
	'/api/v1/networks/[id=id]/tasks/[taskId=id]/updates': 'signed-in',
	'/api/v1/networks/[id=id]/tasks/[taskId=id]/photos': 'signed-in',
	'/api/v1/networks/[id=id]/tasks/[taskId=id]/photos/[photoId=id]': 'signed-in',
	'/api/v1/networks/[id=id]/cautions/acknowledgements': 'signed-in',
	'/(public)/map/[slug]': 'public',
	'/api/v1/public/networks/[slug]': 'public',
	'/api/v1/public/networks/[slug]/importance.png': 'public'
	// (field routes end)
};
