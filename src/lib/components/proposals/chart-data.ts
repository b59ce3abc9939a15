/** Series of iteration history in uPlot's aligned form: one x array, one y array per line. Pure. */

export interface ChartSeries {
	label: string;
	colour: string;
	history: { iteration: number; cost: number; coverage: number }[];
}

export interface ChartLine {
	label: string;
	colour: string;
	kind: 'cost' | 'coverage';
}

/** Line colours, distinct in lightness as well as hue (they also differ by label in the legend). */
export const SERIES_COLOURS = ['#1b5662', '#b2412b', '#6d2f8f', '#7a5a00'] as const;

/**
 * x = the union of every series' iterations, ascending; cost in km² (H is in m²), coverage in
 * percent; null where a series has no entry for that iteration (uPlot leaves a gap or spans it).
 */
export function chartData(series: readonly ChartSeries[], withCoverage: boolean): { data: (number | null)[][]; labels: ChartLine[] } {
	const xs = [...new Set(series.flatMap((s) => s.history.map((h) => h.iteration)))].sort((a, b) => a - b);
	const index = new Map(xs.map((x, i) => [x, i]));
	const data: (number | null)[][] = [xs];
	const labels: ChartLine[] = [];
	for (const s of series) {
		const cost: (number | null)[] = xs.map(() => null);
		const cov: (number | null)[] = xs.map(() => null);
		for (const h of s.history) {
			const i = index.get(h.iteration)!;
			cost[i] = h.cost / 1e6;
			cov[i] = h.coverage * 100;
		}
		data.push(cost);
		labels.push({ label: `${s.label}: cost`, colour: s.colour, kind: 'cost' });
		if (withCoverage) {
			data.push(cov);
			labels.push({ label: `${s.label}: coverage`, colour: s.colour, kind: 'coverage' });
		}
	}
	return { data, labels };
}
