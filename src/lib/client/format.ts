/** Number formatting for readouts and tables: fixed significant figures, a real minus sign. */

export function fmt(value: number | null | undefined, digits = 4): string {
	if (value === null || value === undefined || !Number.isFinite(value)) return '—';
	// Round-off residue (1e-40) and −0 read as zero.
	if (Math.abs(value) < 1e-12) return '0';
	const abs = Math.abs(value);
	let text: string;
	if (abs >= 1e6 || abs < 1e-4) text = value.toExponential(Math.max(0, digits - 1)).replace('e+', 'e');
	else {
		const decimals = Math.max(0, digits - 1 - Math.floor(Math.log10(abs)));
		text = value.toFixed(Math.min(decimals, 8));
	}
	return text.replace(/^-/, '−');
}

/** Fixed decimals (angles, coefficients in tables). */
export function fixed(value: number | null | undefined, decimals: number): string {
	if (value === null || value === undefined || !Number.isFinite(value)) return '—';
	const text = value.toFixed(decimals);
	// "-0.0000" is a zero.
	return /^-0\.?0*$/.test(text) ? text.slice(1) : text.replace(/^-/, '−');
}

export function bytes(n: number): string {
	if (n < 1024) return `${n} B`;
	if (n < 1024 * 1024) return `${(n / 1024).toFixed(1)} KiB`;
	return `${(n / 1024 / 1024).toFixed(1)} MiB`;
}

export function when(iso: string | null | undefined): string {
	if (!iso) return '—';
	const d = new Date(iso);
	if (Number.isNaN(d.getTime())) return iso;
	return d.toISOString().slice(0, 16).replace('T', ' ') + ' UTC';
}
