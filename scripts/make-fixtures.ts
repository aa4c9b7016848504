/**
 * Writes the synthetic demo/test spectra in fixtures/spectra/ (run: npx tsx scripts/make-fixtures.ts).
 * Every number is invented; the generator is the engine's own seeded synthetic model
 * (src/lib/thermometry/synthetic.ts), so a fixture's true temperature is known exactly.
 * The files are written in the formats real instruments export: CSV in nm with comments and a
 * header, TSV in Raman shift without a header (anti-Stokes as positive magnitudes), JCAMP-DX
 * XYDATA, and one combined file spanning both sides with a dark file, spikes and fluorescence.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { createRng } from '../src/lib/thermometry/random';
import {
	syntheticCounts,
	wavelengthUniformAxis,
	type SyntheticSpec
} from '../src/lib/thermometry/synthetic';

const OUT = join(import.meta.dirname, '..', 'fixtures', 'spectra');
mkdirSync(OUT, { recursive: true });

const laserCm1 = (nm: number) => 1e7 / nm;
const uniform = (from: number, to: number, n: number) =>
	Float64Array.from({ length: n }, (_, i) => from + ((to - from) * i) / (n - 1));
const fmt = (v: number, d: number) => v.toFixed(d);

interface Written {
	id: string;
	trueTemperatureK: number;
	note: string;
	options: Record<string, unknown>;
}
const cases: Written[] = [];

// A. Si at 532 nm, two CSV files on a wavelength axis (pixels uniform in nm), bias 300 counts.
{
	const spec: SyntheticSpec = {
		laserNm: 532,
		modeCm1: 520.7,
		temperatureK: 350,
		exponent: 3,
		lineshape: 'lorentzian',
		fwhmCm1: 3.5,
		stokesCounts: 200_000,
		exposureS: { stokes: 1, antiStokes: 4 },
		baseline: { level: 40, slope: 0.0005, antiStokesFraction: 0.1 },
		darkCounts: 300
	};
	const rng = createRng(532);
	for (const side of ['stokes', 'anti-stokes'] as const) {
		const m = side === 'stokes' ? 520.7 : -520.7;
		const axis = wavelengthUniformAxis(532, m - 150, m + 150, 1000);
		const counts = syntheticCounts(axis, side, spec, rng);
		const lines = [
			`# Phonotherm synthetic fixture (invented data): Si 520.7 cm-1, 532 nm, T = 350 K`,
			`# ${side} window, exposure ${side === 'stokes' ? 1 : 4} s, detector bias 300 counts`,
			'wavelength_nm,counts',
			...Array.from(axis, (s, i) => `${fmt(1e7 / (laserCm1(532) - s), 5)},${counts[i]}`)
		];
		writeFileSync(join(OUT, `si-532-${side}.csv`), lines.join('\n') + '\n');
	}
	cases.push({
		id: 'si-532',
		trueTemperatureK: 350,
		note: 'CSV in nm with header and comments; exposures 1 s / 4 s; constant dark 300 counts',
		options: {
			stokes: 'si-532-stokes.csv',
			'anti-stokes': 'si-532-anti-stokes.csv',
			'laser-nm': 532,
			mode: 520.7,
			'exposure-stokes': 1,
			'exposure-anti-stokes': 4,
			dark: 300,
			'c-factor': 1,
			'u-c-factor': 0.02
		}
	});
}

// B. Diamond at 633 nm, two TSV files in Raman shift, no header, anti-Stokes as magnitudes.
{
	const spec: SyntheticSpec = {
		laserNm: 633,
		modeCm1: 1332.5,
		temperatureK: 700,
		exponent: 3,
		lineshape: 'lorentzian',
		fwhmCm1: 2.5,
		stokesCounts: 500_000,
		exposureS: { stokes: 1, antiStokes: 10 },
		baseline: { level: 20, antiStokesFraction: 0.2 }
	};
	const rng = createRng(633);
	for (const side of ['stokes', 'anti-stokes'] as const) {
		const m = side === 'stokes' ? 1332.5 : -1332.5;
		const axis = wavelengthUniformAxis(633, m - 120, m + 120, 800);
		const counts = syntheticCounts(axis, side, spec, rng);
		// Written as |shift|, descending for the anti-Stokes file (as some software exports it).
		const rows = Array.from(axis, (s, i) => `${fmt(Math.abs(s), 4)}\t${counts[i]}`);
		writeFileSync(join(OUT, `diamond-633-${side}.tsv`), rows.join('\n') + '\n');
	}
	cases.push({
		id: 'diamond-633',
		trueTemperatureK: 700,
		note: 'TSV in Raman shift without header; anti-Stokes as positive magnitudes; exposures 1 s / 10 s',
		options: {
			stokes: 'diamond-633-stokes.tsv',
			'anti-stokes': 'diamond-633-anti-stokes.tsv',
			'laser-nm': 633,
			mode: 1332.5,
			'exposure-stokes': 1,
			'exposure-anti-stokes': 10,
			'c-factor': 1,
			'u-c-factor': 0.02
		}
	});
}

// C. Ge at 785 nm, two JCAMP-DX files on a uniform Raman-shift axis (XYDATA, X++(Y..Y)).
{
	const spec: SyntheticSpec = {
		laserNm: 785,
		modeCm1: 300.7,
		temperatureK: 450,
		exponent: 3,
		lineshape: 'gaussian',
		fwhmCm1: 5,
		stokesCounts: 300_000,
		exposureS: { stokes: 2, antiStokes: 2 },
		baseline: { level: 30, antiStokesFraction: 0.3 }
	};
	const rng = createRng(785);
	for (const side of ['stokes', 'anti-stokes'] as const) {
		const m = side === 'stokes' ? 300.7 : -300.7;
		const from = Math.round(m - 100);
		const axis = uniform(from, from + 200, 401); // 0.5 cm⁻¹ steps
		const counts = syntheticCounts(axis, side, spec, rng);
		const data: string[] = [];
		for (let i = 0; i < axis.length; i += 10) {
			data.push(`${fmt(axis[i], 1)} ${Array.from(counts.subarray(i, i + 10)).join(' ')}`);
		}
		const text = [
			`##TITLE=Phonotherm synthetic fixture (invented data): Ge 300.7 cm-1, 785 nm, T = 450 K, ${side}`,
			'##JCAMP-DX=4.24',
			'##DATA TYPE=RAMAN SPECTRUM',
			'##XUNITS=RAMAN SHIFT (1/CM)',
			'##YUNITS=COUNTS',
			`##FIRSTX=${fmt(axis[0], 1)}`,
			`##LASTX=${fmt(axis[axis.length - 1], 1)}`,
			`##NPOINTS=${axis.length}`,
			'##XFACTOR=1',
			'##YFACTOR=1',
			'##XYDATA=(X++(Y..Y))',
			...data,
			'##END='
		];
		writeFileSync(join(OUT, `ge-785-${side}.jdx`), text.join('\n') + '\n');
	}
	cases.push({
		id: 'ge-785',
		trueTemperatureK: 450,
		note: 'JCAMP-DX XYDATA in Raman shift; Gaussian bands; exposures 2 s / 2 s',
		options: {
			stokes: 'ge-785-stokes.jdx',
			'anti-stokes': 'ge-785-anti-stokes.jdx',
			'laser-nm': 785,
			mode: 300.7,
			lineshape: 'gaussian',
			'exposure-stokes': 2,
			'exposure-anti-stokes': 2,
			'c-factor': 1,
			'u-c-factor': 0.02
		}
	});
}

// D. Si at 785 nm, one combined file across the laser line, a dark file, spikes, fluorescence.
{
	const spec: SyntheticSpec = {
		laserNm: 785,
		modeCm1: 520.7,
		temperatureK: 500,
		exponent: 3,
		lineshape: 'lorentzian',
		fwhmCm1: 4,
		stokesCounts: 400_000,
		exposureS: { stokes: 2, antiStokes: 2 },
		baseline: { level: 150, slope: 0.001, curvature: 2e-6, antiStokesFraction: 0.05 },
		darkCounts: 600
	};
	const rng = createRng(7850);
	// Pixels uniform in wavelength across both sides; the laser line itself is filtered out, so
	// the file simply skips the notch region |shift| < 80 cm⁻¹.
	const all = wavelengthUniformAxis(785, -750, 750, 1800);
	const rows: string[] = [
		'# Phonotherm synthetic fixture (invented data): Si, 785 nm, T = 500 K',
		'raman_shift_cm-1,counts'
	];
	const darkRows: string[] = ['# dark frame, 2 s, shutter closed', 'raman_shift_cm-1,counts'];
	const spikeAt = new Set([210, 640, 1390]);
	let k = 0;
	for (const side of ['anti-stokes', 'stokes'] as const) {
		const axis = all.filter((s) => (side === 'stokes' ? s > 80 : s < -80));
		const counts = syntheticCounts(axis, side, spec, rng);
		for (let i = 0; i < axis.length; i++, k++) {
			const spike = spikeAt.has(k) ? 900 + Math.round(1500 * rng.uniform()) : 0;
			rows.push(`${fmt(axis[i], 3)},${counts[i] + spike}`);
			if (i % 3 === 0) darkRows.push(`${fmt(axis[i], 3)},${rng.poisson(600)}`);
		}
	}
	// Make the dark span the whole file (first and last points included).
	darkRows.push(rows[rows.length - 1].split(',')[0] + ',' + rng.poisson(600));
	writeFileSync(join(OUT, 'si-785-combined.csv'), rows.join('\n') + '\n');
	writeFileSync(join(OUT, 'si-785-dark.csv'), darkRows.join('\n') + '\n');
	cases.push({
		id: 'si-785-combined',
		trueTemperatureK: 500,
		note: 'one combined CSV across the laser line (notch |shift| < 80 cm⁻¹ absent), dark file, 3 spikes, curved fluorescence',
		options: {
			combined: 'si-785-combined.csv',
			'laser-nm': 785,
			mode: 520.7,
			'exposure-stokes': 2,
			dark: 'si-785-dark.csv',
			baseline: 'polynomial',
			'c-factor': 1,
			'u-c-factor': 0.02
		}
	});
}

// E. Broken files for the refusal tests.
{
	const rows = Array.from({ length: 40 }, (_, i) => `${500 + i * 0.5},${100 + i}`);
	rows[17] = '508.5,n/a';
	writeFileSync(join(OUT, 'broken-not-numeric.csv'), ['shift,counts', ...rows].join('\n') + '\n');
}

writeFileSync(
	join(OUT, 'cases.json'),
	JSON.stringify(
		cases.map((c) => ({ id: c.id, ...c.options })),
		null,
		'\t'
	) + '\n'
);
writeFileSync(
	join(OUT, 'truth.json'),
	JSON.stringify(
		cases.map((c) => ({ id: c.id, true_temperature_k: c.trueTemperatureK, note: c.note })),
		null,
		'\t'
	) + '\n'
);
console.log(`wrote ${cases.length} cases to ${OUT}`);
