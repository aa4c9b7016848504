import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analysisOptions, pairInputs, type FilePart } from './analysis-options';
import {
	measurementMetadata,
	type MeasurementMetadata,
	type ReanalysisSettings
} from './measurement-metadata';
import { analyzePairDetailed, type FileText } from './thermometry/analyze';
import { createRng } from './thermometry/random';
import { expectedCounts, wavelengthUniformAxis } from './thermometry/synthetic';
import type { Reading } from './thermometry/types';
import { choiceOf, whatIf, type WhatIfChoice } from './what-if';

type Files = Partial<Record<FilePart, FileText>>;

/** A profile-less upload's settings as stored (resolveRequest in src/lib/server/measurements/resolve.ts). */
function stored(request: unknown): MeasurementMetadata {
	const m = measurementMetadata.parse(request);
	return {
		...m,
		laser_nm: m.laser_nm!,
		detector: m.detector ?? 'photon-counting',
		c_factor: m.c_factor!,
		u_c_factor: m.u_c_factor!
	};
}

/**
 * The reference is the worker's own path (src/lib/server/worker/analyse.ts): the uploaded
 * metadata merged with the re-analysis changes (src/lib/server/measurements/reanalyse.ts), then
 * pairInputs → analysisOptions → analyzePairDetailed.
 */
function worker(files: Files, metadata: MeasurementMetadata, changes: ReanalysisSettings): Reading {
	const settings: MeasurementMetadata = { ...metadata, ...changes };
	return analyzePairDetailed(pairInputs(files, settings), analysisOptions(settings)).reading;
}

const close = (a: number | null | undefined, b: number | null | undefined) => {
	expect(a).not.toBeNull();
	expect(b).not.toBeNull();
	expect(Math.abs(a! - b!)).toBeLessThanOrEqual(1e-9 * Math.abs(b!));
};

/** T, u(T), U, k and every budget row equal to 1e-9 relative (the brief's tolerance). */
function expectSameFigures(mine: Reading, engine: Reading) {
	close(mine.temperature_k, engine.temperature_k);
	close(mine.u_temperature_k, engine.u_temperature_k);
	close(mine.expanded_uncertainty_k, engine.expanded_uncertainty_k);
	expect(mine.coverage_factor).toBe(engine.coverage_factor);
	expect(mine.exponent).toBe(engine.exponent);
	expect(mine.lineshape).toBe(engine.lineshape);
	expect(mine.budget.map((r) => r.input)).toEqual(engine.budget.map((r) => r.input));
	mine.budget.forEach((row, i) => {
		const ref = engine.budget[i];
		close(row.value, ref.value);
		close(row.standard_uncertainty + 1, ref.standard_uncertainty + 1);
		close(row.sensitivity, ref.sensitivity);
		close(row.contribution_k + 1, ref.contribution_k + 1);
		close(row.variance_share + 1, ref.variance_share + 1);
	});
	if (engine.birge_ratio !== undefined) close(mine.birge_ratio, engine.birge_ratio);
}

// Synthetic fixture with a known temperature (fixtures/spectra/README.md), as the worker gets it.
const dir = new URL('../../fixtures/spectra/', import.meta.url);
const read = (name: string) => ({ name, text: readFileSync(new URL(name, dir), 'utf8') });
const SI_FILES: Files = {
	stokes: read('si-532-stokes.csv'),
	anti_stokes: read('si-532-anti-stokes.csv')
};
const SI = stored({
	laser_nm: 532,
	modes: [520.7],
	exposure_stokes_s: 1,
	exposure_anti_stokes_s: 4,
	dark_counts: 300,
	c_factor: 1,
	u_c_factor: 0.02
});

/** An invented two-band spectrum (bands at 418 and 645 cm⁻¹, 500 K) as two CSV files. */
function twoModeFiles(): Files {
	const rng = createRng(7);
	const spec = {
		laserNm: 532,
		temperatureK: 500,
		exponent: 3 as const,
		lineshape: 'lorentzian' as const,
		fwhmCm1: 3,
		stokesCounts: 2e5
	};
	const file = (side: 'stokes' | 'anti-stokes'): FileText => {
		const axis =
			side === 'stokes'
				? wavelengthUniformAxis(532, 300, 800, 1500)
				: wavelengthUniformAxis(532, -800, -300, 1500);
		const a = expectedCounts(axis, side, { ...spec, modeCm1: 418 });
		const b = expectedCounts(axis, side, { ...spec, modeCm1: 645 });
		const rows = Array.from(axis, (x, i) => `${x.toFixed(4)},${rng.poisson(a[i] + b[i] + 50)}`);
		return { name: `${side}.csv`, text: `raman_shift_cm-1,counts\n${rows.join('\n')}` };
	};
	return { stokes: file('stokes'), anti_stokes: file('anti-stokes') };
}
const TWO = stored({
	laser_nm: 532,
	modes: [418, 645],
	dark_counts: 50,
	c_factor: 1,
	u_c_factor: 0.01
});

describe('what-if panel figures', () => {
	it('start from the stored reading: the unchanged settings give the worker’s reading', () => {
		const evaluate = whatIf(SI_FILES, SI);
		expectSameFigures(evaluate(choiceOf(SI)), worker(SI_FILES, SI, {}));
	});

	it('a u(C) and k change re-combine the budget to what a re-analysis computes', () => {
		const evaluate = whatIf(SI_FILES, SI);
		const start = evaluate(choiceOf(SI));
		const choice: WhatIfChoice = { ...choiceOf(SI), u_c_factor: 0.05, coverage_factor: 3 };
		const mine = evaluate(choice);
		expectSameFigures(mine, worker(SI_FILES, SI, { u_c_factor: 0.05, coverage_factor: 3 }));
		// Source: GUM (JCGM 100:2008) eq. 10 and §6.2.1 — hand computation: only the C row's
		// variance changes, by c_C²·(0.05² − 0.02²), T stays, and U = k·u(T) = 3·u(T).
		const cC = start.budget.find((r) => r.input === 'c_factor')!.sensitivity;
		const expected = Math.sqrt(start.u_temperature_k! ** 2 + cC ** 2 * (0.05 ** 2 - 0.02 ** 2));
		close(mine.u_temperature_k, expected);
		close(mine.temperature_k, start.temperature_k);
		close(mine.expanded_uncertainty_k, 3 * expected);
	});

	it('an exponent and a lineshape change refit to what a re-analysis computes', () => {
		const evaluate = whatIf(SI_FILES, SI);
		const energy: WhatIfChoice = { ...choiceOf(SI), detector: 'energy', coverage_factor: 2.5 };
		const byEnergy = evaluate(energy);
		expectSameFigures(byEnergy, worker(SI_FILES, SI, { detector: 'energy', coverage_factor: 2.5 }));
		expect(byEnergy.exponent).toBe(4);
		const gaussian: WhatIfChoice = { ...energy, lineshape: 'gaussian', u_c_factor: 0.01 };
		expectSameFigures(
			evaluate(gaussian),
			worker(SI_FILES, SI, {
				detector: 'energy',
				coverage_factor: 2.5,
				lineshape: 'gaussian',
				u_c_factor: 0.01
			})
		);
		// Source: physics.md §1.1 — ρ = C·((ν̃L+ν̃m)/(ν̃L−ν̃m))ⁿ·exp(−c₂ν̃m/T) with a factor above 1,
		// so at the same measured ρ a larger n leaves a smaller Boltzmann factor: T falls.
		expect(byEnergy.temperature_k!).toBeLessThan(evaluate(choiceOf(SI)).temperature_k!);
	});

	it('two modes: dropping one, and u(C) shared by both, give what a re-analysis computes', () => {
		const files = twoModeFiles();
		const evaluate = whatIf(files, TWO);
		const both = evaluate(choiceOf(TWO));
		expect(both.modes).toHaveLength(2);
		expectSameFigures(both, worker(files, TWO, {}));
		expectSameFigures(
			evaluate({ ...choiceOf(TWO), u_c_factor: 0.04 }),
			worker(files, TWO, { u_c_factor: 0.04 })
		);
		const one = evaluate({ ...choiceOf(TWO), modes: [418], coverage_factor: 3 });
		expect(one.modes).toHaveLength(1);
		expectSameFigures(one, worker(files, TWO, { modes: [418], coverage_factor: 3 }));
	});

	it('a combined file with a dark file and a baseline: the same parts the worker reads', () => {
		const files: Files = {
			combined: read('si-785-combined.csv'),
			dark: read('si-785-dark.csv')
		};
		const metadata = stored({
			laser_nm: 785,
			modes: [520.7],
			exposure_stokes_s: 2,
			baseline: 'polynomial',
			c_factor: 1,
			u_c_factor: 0.02
		});
		const evaluate = whatIf(files, metadata);
		expectSameFigures(evaluate(choiceOf(metadata)), worker(files, metadata, {}));
		const change: WhatIfChoice = {
			...choiceOf(metadata),
			lineshape: 'pseudo-voigt',
			u_c_factor: 0
		};
		expectSameFigures(
			evaluate(change),
			worker(files, metadata, { lineshape: 'pseudo-voigt', u_c_factor: 0 })
		);
	});

	it('refuses what the engine refuses, with the engine’s reason', () => {
		const evaluate = whatIf(SI_FILES, SI);
		expect(() => evaluate({ ...choiceOf(SI), modes: [1332.5] })).toThrow(/1332\.5 cm⁻¹/);
	});
});
