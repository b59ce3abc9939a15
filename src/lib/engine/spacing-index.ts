/**
 * Uniform-bucket index over sensor positions for the minSpacing check: buckets of side
 * `spacing`, so every sensor closer than `spacing` to a point lies in the 3 × 3 buckets around
 * it. O(1) per query for spread-out sensors instead of O(N).
 * Positions are read from the caller's arrays; call move() whenever one of them changes.
 */
export class SpacingIndex {
	private readonly buckets = new Map<number, number[]>();

	constructor(
		private readonly pu: Float64Array,
		private readonly pv: Float64Array,
		private readonly spacing: number
	) {
		for (let i = 0; i < pu.length; i++) this.insert(i, pu[i], pv[i]);
	}

	private key(bx: number, by: number): number {
		return bx * 1_000_003 + by;
	}

	private insert(i: number, u: number, v: number): void {
		const k = this.key(Math.floor(u / this.spacing), Math.floor(v / this.spacing));
		const list = this.buckets.get(k);
		if (list) list.push(i);
		else this.buckets.set(k, [i]);
	}

	/** Sensor i moved from (u0, v0) to its current position in the arrays. */
	move(i: number, u0: number, v0: number): void {
		const k = this.key(Math.floor(u0 / this.spacing), Math.floor(v0 / this.spacing));
		const list = this.buckets.get(k);
		if (list) {
			const j = list.indexOf(i);
			if (j >= 0) list.splice(j, 1);
		}
		this.insert(i, this.pu[i], this.pv[i]);
	}

	/** True if a sensor other than i stands closer than spacing to (u, v). */
	anyWithin(i: number, u: number, v: number): boolean {
		const s2 = this.spacing * this.spacing;
		const bx = Math.floor(u / this.spacing);
		const by = Math.floor(v / this.spacing);
		for (let dx = -1; dx <= 1; dx++) {
			for (let dy = -1; dy <= 1; dy++) {
				const list = this.buckets.get(this.key(bx + dx, by + dy));
				if (!list) continue;
				for (const j of list) {
					if (j === i) continue;
					const du = this.pu[j] - u;
					const dv = this.pv[j] - v;
					if (du * du + dv * dv < s2) return true;
				}
			}
		}
		return false;
	}
}
