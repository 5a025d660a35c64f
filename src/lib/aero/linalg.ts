/**
 * Dense LU factorisation with partial pivoting (Doolittle, row-major
 * Float64Array), after Golub & Van Loan, *Matrix Computations*, 4th ed.,
 * §3.4 (Gaussian elimination with partial pivoting). Kept local because the solvers factor one small matrix and
 * then solve many right-hand sides; no dependency offers that as plainly.
 */

/** A pivot smaller than this times the largest |entry| marks the matrix singular. */
export const SINGULAR_PIVOT_TOLERANCE = 1e-13;

export interface LUFactors {
	n: number;
	/** L (unit lower, below diagonal) and U (on and above), row-major. */
	lu: Float64Array;
	/** Row permutation: row i of PA is row piv[i] of A. */
	piv: Int32Array;
}

/**
 * Factor the n×n row-major matrix `a` (not modified) as PA = LU.
 * Throws when a pivot vanishes (singular to working precision), naming the
 * column and `what` is solved.
 */
export function luFactor(a: ArrayLike<number>, n: number, what = 'matrix'): LUFactors {
	if (a.length !== n * n) throw new Error(`luFactor: ${what} has ${a.length} entries, expected ${n}×${n}`);
	const lu = Float64Array.from(a);
	const piv = new Int32Array(n);
	let scale = 0;
	for (let i = 0; i < n * n; i++) scale = Math.max(scale, Math.abs(lu[i]));
	for (let i = 0; i < n; i++) piv[i] = i;
	const tol = SINGULAR_PIVOT_TOLERANCE * (scale || 1);
	for (let k = 0; k < n; k++) {
		let p = k;
		let max = Math.abs(lu[k * n + k]);
		for (let i = k + 1; i < n; i++) {
			const v = Math.abs(lu[i * n + k]);
			if (v > max) {
				max = v;
				p = i;
			}
		}
		if (!(max > tol)) throw new Error(`luFactor: ${what} is singular (pivot ${max.toExponential(2)} in column ${k})`);
		if (p !== k) {
			const rk = k * n;
			const rp = p * n;
			for (let j = 0; j < n; j++) {
				const t = lu[rk + j];
				lu[rk + j] = lu[rp + j];
				lu[rp + j] = t;
			}
			const t = piv[k];
			piv[k] = piv[p];
			piv[p] = t;
		}
		const rk = k * n;
		const inv = 1 / lu[rk + k];
		for (let i = k + 1; i < n; i++) {
			const ri = i * n;
			const f = (lu[ri + k] *= inv);
			if (f !== 0) for (let j = k + 1; j < n; j++) lu[ri + j] -= f * lu[rk + j];
		}
	}
	return { n, lu, piv };
}

/** Solve A x = b with the factors of A; returns a new Float64Array. */
export function luSolve(f: LUFactors, b: ArrayLike<number>): Float64Array {
	const { n, lu, piv } = f;
	if (b.length !== n) throw new Error(`luSolve: right-hand side has ${b.length} entries, expected ${n}`);
	const x = new Float64Array(n);
	for (let i = 0; i < n; i++) {
		let s = b[piv[i]];
		const ri = i * n;
		for (let j = 0; j < i; j++) s -= lu[ri + j] * x[j];
		x[i] = s;
	}
	for (let i = n - 1; i >= 0; i--) {
		let s = x[i];
		const ri = i * n;
		for (let j = i + 1; j < n; j++) s -= lu[ri + j] * x[j];
		x[i] = s / lu[ri + i];
	}
	return x;
}

/** Solve A x = b once (factor and solve). */
export function solveDense(a: ArrayLike<number>, b: ArrayLike<number>, n: number, what = 'matrix'): Float64Array {
	return luSolve(luFactor(a, n, what), b);
}
