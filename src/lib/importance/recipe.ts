/**
 * An importance recipe: which layers make importance, how each is transformed and how much it
 * weighs. Validated with zod so a form, a JSON API and a stored version all pass one gate.
 */
import { z } from 'zod';

export const TRANSFORMS = ['identity', 'invert', 'minmax', 'band', 'variability'] as const;
export type TransformName = (typeof TRANSFORMS)[number];

const layerId = z.string({ error: 'layerId must be a string' }).trim().min(1, 'layerId must not be empty').max(100, 'layerId is longer than 100 characters');
// zod 4 numbers refuse NaN and ±Infinity, so every number here is finite.
const weight = z.number({ error: 'weight must be a number' }).refine((w) => w > 0, 'weight must be greater than 0');
const finite = (what: string) => z.number({ error: `${what} must be a number` });
const noParams = z.object({}).strict().optional().default({});

const identityStep = z.object({ layerId, transform: z.literal('identity'), weight, params: noParams });
const invertStep = z.object({ layerId, transform: z.literal('invert'), weight, params: noParams });
const minmaxStep = z.object({ layerId, transform: z.literal('minmax'), weight, params: noParams });
const bandStep = z.object({
	layerId,
	transform: z.literal('band'),
	weight,
	params: z
		.object({
			lo: finite('band lower threshold (lo)'),
			hi: finite('band upper threshold (hi)'),
			/** Width of a linear ramp outside each threshold, in layer units; 0 = hard edges. */
			soft: finite('band edge width (soft)').refine((s) => s >= 0, 'band edge width (soft) must be 0 or more').optional().default(0)
		})
		.strict()
		.refine((p) => p.lo <= p.hi, { message: 'band lower threshold (lo) must not exceed the upper threshold (hi)', path: ['lo'] })
});
const variabilityStep = z.object({
	layerId,
	transform: z.literal('variability'),
	weight,
	params: z
		.object({
			/** Half-width of the moving window, metres. */
			distanceM: finite('variability distance (distanceM)').refine((d) => d > 0, 'variability distance (distanceM) must be greater than 0')
		})
		.strict()
});

export const recipeStepSchema = z.discriminatedUnion('transform', [identityStep, invertStep, minmaxStep, bandStep, variabilityStep], {
	error: `transform must be one of ${TRANSFORMS.join(', ')}`
});

export const recipeSchema = z
	.object({
		layers: z.array(recipeStepSchema, { error: 'layers must be a list' }).min(1, 'a recipe needs at least one layer').max(20, 'a recipe may use at most 20 layers')
	})
	.strict();

export type RecipeStep = z.output<typeof recipeStepSchema>;
export type Recipe = z.output<typeof recipeSchema>;
export type RecipeInput = z.input<typeof recipeSchema>;

export interface RecipeIssue {
	/** Dotted path, e.g. `layers.1.params.hi`. */
	path: string;
	message: string;
}

/** Validate unknown input as a recipe: either the parsed recipe or a flat list of readable issues. */
export function parseRecipe(input: unknown): { ok: true; recipe: Recipe } | { ok: false; issues: RecipeIssue[] } {
	const res = recipeSchema.safeParse(input);
	if (res.success) return { ok: true, recipe: res.data };
	return { ok: false, issues: res.error.issues.map((i) => ({ path: i.path.map(String).join('.'), message: i.message })) };
}
