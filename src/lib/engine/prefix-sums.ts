/**
 * Per-row prefix sums of the mass and its first two column moments, so that the mass,
 * Σu·φ and Σu²·φ of any run of cells in one row is read in O(1).
 * For row r, entry r*(width+1)+c holds the sum over columns c' < c, with u = c' + 0.5
 * (the cell centre in grid units).
 */
export interface RowPrefixSums {
	width: number;
	height: number;
	/** Σ φ */
	m0: Float64Array;
	/** Σ u·φ */
	m1: Float64Array;
	/** Σ u²·φ */
	m2: Float64Array;
}

export function rowPrefixSums(mass: Float64Array, width: number, height: number): RowPrefixSums {
	const stride = width + 1;
	const m0 = new Float64Array(height * stride);
	const m1 = new Float64Array(height * stride);
	const m2 = new Float64Array(height * stride);
	for (let r = 0; r < height; r++) {
		const o = r * stride;
		const rowStart = r * width;
		let s0 = 0;
		let s1 = 0;
		let s2 = 0;
		for (let c = 0; c < width; c++) {
			const phi = mass[rowStart + c];
			const u = c + 0.5;
			s0 += phi;
			s1 += u * phi;
			s2 += u * u * phi;
			m0[o + c + 1] = s0;
			m1[o + c + 1] = s1;
			m2[o + c + 1] = s2;
		}
	}
	return { width, height, m0, m1, m2 };
}
