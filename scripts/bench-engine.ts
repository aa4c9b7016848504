/**
 * `npm run bench:engine`: figures only, no assertions (issue 3 item 11).
 *
 *  1. Pairs per second by the joint fit on one core: synthetic prepared windows of 2,000 points
 *     per side, one band each, through `estimate()` (the estimator alone).
 *  2. The same from file text: parse → axis → prepare → estimate (`analyzePair`).
 *  3. A 10,000-pair map in batch mode: a generated batch file through the command line's own
 *     code path (`runCli`, the function `scripts/analyze.ts` runs), in this one process. The map
 *     cycles through 200 distinct pairs of CSV files so the disk stays small; every case still
 *     reads and parses its two files.
 *  4. Peak memory (maximum resident set size of this process).
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import os, { tmpdir } from 'node:os';
import { join } from 'node:path';
import { analyzePair } from '../src/lib/thermometry/analyze';
import { estimate, type EstimateOptions } from '../src/lib/thermometry/estimate';
import { lmCounters } from '../src/lib/thermometry/levenberg-marquardt';
import { syntheticPair, type SyntheticSpec } from '../src/lib/thermometry/synthetic';
import { runCli } from './analyze';

const MAP_PAIRS = 10_000;
const DISTINCT_FILES = 200;

const base: SyntheticSpec = {
	laserNm: 532,
	modeCm1: 520.7,
	temperatureK: 400,
	exponent: 3,
	lineshape: 'lorentzian',
	fwhmCm1: 3.5,
	stokesCounts: 200_000,
	exposureS: { stokes: 1, antiStokes: 4 },
	baseline: { level: 50 },
	window: { halfRangeCm1: 250, points: 2000 }
};
const estOpts: EstimateOptions = {
	laserNm: 532,
	modes: [520.7],
	exponent: 3,
	lineshape: 'lorentzian',
	response: { kind: 'constant', c: 1, u_c: 0.02 }
};

/**
 * This process's CPU time (user + system), ms. On a shared machine it is what one core actually
 * spent; the wall time also counts waiting for a core.
 */
function cpuMs(): number {
	const u = process.cpuUsage();
	return (u.user + u.system) / 1000;
}

function timeLoop(minMs: number, fn: (i: number) => void): { n: number; ms: number; cpu: number } {
	const t0 = performance.now();
	const c0 = cpuMs();
	let n = 0;
	while (performance.now() - t0 < minMs) fn(n++);
	return { n, ms: performance.now() - t0, cpu: cpuMs() - c0 };
}

const fmt = (x: number, d = 0) =>
	x.toLocaleString('en-US', { maximumFractionDigits: d, minimumFractionDigits: d });

// 1. Estimator alone.
const pairs = Array.from({ length: 50 }, (_, i) =>
	syntheticPair({ ...base, temperatureK: 300 + 10 * i, seed: i + 1 })
);
for (let i = 0; i < 200; i++)
	estimate(pairs[i % 50].stokes.prepared, pairs[i % 50].antiStokes.prepared, estOpts); // warm-up
const lm0 = { ...lmCounters };
const est = timeLoop(3000, (i) =>
	estimate(pairs[i % 50].stokes.prepared, pairs[i % 50].antiStokes.prepared, estOpts)
);
// Fits and LM iterations per pair: the work the estimator does, independent of machine load.
const fitsPerPair = (lmCounters.fits - lm0.fits) / est.n;
const itersPerPair = (lmCounters.iterations - lm0.iterations) / est.n;

// Files for 2 and 3: CSV in nm, as an instrument writes them.
const dir = mkdtempSync(join(tmpdir(), 'phonotherm-bench-'));
const nuL = 1e7 / 532;
const csv = (shift: Float64Array, counts: Float64Array) =>
	'wavelength_nm,counts\n' +
	Array.from(shift, (s, i) => `${(1e7 / (nuL - s)).toFixed(5)},${counts[i]}`).join('\n') +
	'\n';
const texts: { stokes: string; anti: string }[] = [];
for (let i = 0; i < DISTINCT_FILES; i++) {
	const p = syntheticPair({ ...base, temperatureK: 300 + (i % 50) * 4, seed: 1000 + i });
	const stokes = csv(p.stokes.raw.shift, p.stokes.raw.counts);
	const anti = csv(p.antiStokes.raw.shift, p.antiStokes.raw.counts);
	writeFileSync(join(dir, `s${i}.csv`), stokes);
	writeFileSync(join(dir, `as${i}.csv`), anti);
	texts.push({ stokes, anti });
}

// 2. Whole pipeline from text.
const pipeOpts = {
	laserNm: 532,
	modes: [520.7],
	exposureStokesS: 1,
	exposureAntiStokesS: 4,
	response: { kind: 'constant' as const, c: 1, u_c: 0.02 }
};
const pipe = timeLoop(3000, (i) => {
	const t = texts[i % DISTINCT_FILES];
	analyzePair(
		{ stokes: { name: 's.csv', text: t.stokes }, antiStokes: { name: 'as.csv', text: t.anti } },
		pipeOpts
	);
});

// 3. The map through the command line's code path.
const side = Math.ceil(Math.sqrt(MAP_PAIRS));
const cases = Array.from({ length: MAP_PAIRS }, (_, i) => ({
	id: `${i % side},${Math.floor(i / side)}`,
	stokes: `s${i % DISTINCT_FILES}.csv`,
	'anti-stokes': `as${i % DISTINCT_FILES}.csv`,
	'laser-nm': 532,
	mode: 520.7,
	'exposure-stokes': 1,
	'exposure-anti-stokes': 4,
	'c-factor': 1,
	'u-c-factor': 0.02
}));
const batchFile = join(dir, 'map.json');
writeFileSync(batchFile, JSON.stringify(cases));
let lines = 0;
let errors = 0;
const t0 = performance.now();
const c0 = cpuMs();
const code = runCli(['--batch', batchFile], {
	out: (line) => {
		lines++;
		if (line.startsWith('{"error"') || line.includes('"error":{')) errors++;
	},
	err: () => {},
	cwd: dir
});
const mapMs = performance.now() - t0;
const mapCpu = cpuMs() - c0;
rmSync(dir, { recursive: true, force: true });

const rssMiB = process.resourceUsage().maxRSS / 1024;
const perS = (n: number, ms: number) => fmt(n / (ms / 1000));
const row = (label: string, wall: string, cpu: string, note: string) =>
	console.log(`  ${label.padEnd(36)} ${wall.padStart(14)} ${cpu.padStart(14)}   ${note}`);
console.log(
	'Phonotherm engine benchmark (one core, synthetic data, 2,000 points per side, one band)'
);
row('figure', 'wall clock', 'CPU time', '');
row(
	'joint fit (estimate only)',
	`${perS(est.n, est.ms)} pairs/s`,
	`${perS(est.n, est.cpu)} pairs/s`,
	`${fmt(est.cpu / est.n, 3)} ms CPU per pair, ${est.n} pairs; ${fmt(fitsPerPair, 1)} fits, ${fmt(itersPerPair, 1)} LM iterations per pair`
);
row(
	'whole pipeline from CSV text',
	`${perS(pipe.n, pipe.ms)} pairs/s`,
	`${perS(pipe.n, pipe.cpu)} pairs/s`,
	`${fmt(pipe.cpu / pipe.n, 3)} ms CPU per pair, ${pipe.n} pairs`
);
row(
	`${fmt(MAP_PAIRS)}-pair map, --batch, one process`,
	`${fmt(mapMs / 1000, 1)} s`,
	`${fmt(mapCpu / 1000, 1)} s`,
	`${perS(MAP_PAIRS, mapCpu)} pairs/s CPU; ${lines} lines, ${errors} refused, exit ${code}`
);
row('peak memory (max RSS)', `${fmt(rssMiB, 0)} MiB`, '', '');
console.log(
	`  node ${process.version}, ${process.platform}/${process.arch}, ${os.cpus().length} cores, load average ${os
		.loadavg()
		.map((l) => l.toFixed(1))
		.join(' ')}`
);
