/**
 * Writes the import benchmark's input by streaming (never held in memory):
 * bench-data/flight-1m.csv, a flight time history of 1,000,000 rows × 12
 * numeric columns (about 130 MB), 20 Hz, invented values in the style of
 * fixtures/flight-steady-segments.csv. bench-data/ is git-ignored.
 *
 *   npx tsx scripts/generate-bench-files.ts [rows]
 */
import { createWriteStream, mkdirSync } from 'node:fs';
import { once } from 'node:events';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { mulberry32 } from '../fixtures/scenario';

const OUT_DIR = join(dirname(fileURLToPath(import.meta.url)), '..', 'bench-data');
const rows = Number(process.argv[2] ?? 1_000_000);
const file = join(OUT_DIR, rows === 1_000_000 ? 'flight-1m.csv' : `flight-${rows}.csv`);

async function main(): Promise<void> {
	mkdirSync(OUT_DIR, { recursive: true });
	const out = createWriteStream(file);
	const rnd = mulberry32(1_000_000);
	const noise = (a: number) => (rnd() - 0.5) * 2 * a;
	out.write('time [s],KCAS,KTAS,Hp [ft],OAT [degC],Weight [lb],Nz,AoA [deg],Pitch [deg],Climb rate [ft/min],ax [m/s2],Thrust [N]\n');
	let buf = '';
	for (let i = 0; i < rows; i++) {
		const t = i / 20;
		// slow speed sweeps between 70 and 130 kt, one per 10 minutes
		const kcas = 100 + 30 * Math.sin((2 * Math.PI * t) / 600);
		const ktas = kcas * 1.08;
		buf +=
			`${t.toFixed(3)},${(kcas + noise(0.3)).toFixed(5)},${(ktas + noise(0.3)).toFixed(5)},${(5000 + noise(5)).toFixed(3)},` +
			`${(5.1 + noise(0.1)).toFixed(5)},${(2315 - 0.01 * t).toFixed(4)},${(1 + noise(0.01)).toFixed(6)},${(4 + noise(0.05)).toFixed(6)},` +
			`${(3 + noise(0.05)).toFixed(6)},${noise(30).toFixed(4)},${noise(0.02).toFixed(6)},${(900 + noise(20)).toFixed(4)}\n`;
		if (buf.length > 1 << 16) {
			if (!out.write(buf)) await once(out, 'drain');
			buf = '';
		}
	}
	out.end(buf);
	await once(out, 'finish');
	console.log(`wrote ${rows.toLocaleString('en-US')} rows to ${file} (${(out.bytesWritten / 1e6).toFixed(1)} MB)`);
}

await main();
