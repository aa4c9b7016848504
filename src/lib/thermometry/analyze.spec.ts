import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analyzePair, toJson, type AnalyzeOptions, type PairInputs } from './analyze';
import { EngineError } from './types';

// Synthetic fixtures with known temperatures (fixtures/spectra/README.md, made by
// scripts/make-fixtures.ts from the engine's seeded synthetic model).
const dir = new URL('../../../fixtures/spectra/', import.meta.url);
const read = (name: string) => ({ name, text: readFileSync(new URL(name, dir), 'utf8') });
const truth = JSON.parse(readFileSync(new URL('truth.json', dir), 'utf8')) as {
	id: string;
	true_temperature_k: number;
}[];
const trueT = (id: string) => truth.find((t) => t.id === id)!.true_temperature_k;

const C = { kind: 'constant' as const, c: 1, u_c: 0.02 };
const si532 = (): { inputs: PairInputs; options: AnalyzeOptions } => ({
	inputs: {
		stokes: read('si-532-stokes.csv'),
		antiStokes: read('si-532-anti-stokes.csv'),
		dark: 300
	},
	options: {
		laserNm: 532,
		modes: [520.7],
		exposureStokesS: 1,
		exposureAntiStokesS: 4,
		response: C
	}
});

function refusal(fn: () => unknown): EngineError {
	try {
		fn();
	} catch (e) {
		expect(e).toBeInstanceOf(EngineError);
		return e as EngineError;
	}
	throw new Error('expected a refusal');
}

describe('analyzePair on the synthetic fixtures', () => {
	it('CSV pair in nm: the true T lies within the expanded uncertainty', () => {
		const { inputs, options } = si532();
		const r = analyzePair(inputs, options);
		expect(r.temperature_k).not.toBeNull();
		expect(Math.abs(r.temperature_k! - trueT('si-532'))).toBeLessThan(r.expanded_uncertainty_k!);
		expect(r.coverage_factor).toBe(2);
		expect(r.modes[0].stokes.area).toBeGreaterThan(r.modes[0].anti_stokes.area);
	});

	it('TSV pair with anti-Stokes magnitudes equals the same data as negative shifts', () => {
		const options = {
			laserNm: 633,
			modes: [1332.5],
			exposureStokesS: 1,
			exposureAntiStokesS: 10,
			response: C
		};
		const stokes = read('diamond-633-stokes.tsv');
		const magnitudes = read('diamond-633-anti-stokes.tsv');
		const negative = {
			name: 'neg.tsv',
			text: magnitudes.text.replace(/^(\d)/gm, '-$1')
		};
		const a = analyzePair({ stokes, antiStokes: magnitudes }, options);
		const b = analyzePair({ stokes, antiStokes: negative }, options);
		expect(a.temperature_k).toBe(b.temperature_k);
		expect(a.u_temperature_k).toBe(b.u_temperature_k);
		expect(Math.abs(a.temperature_k! - trueT('diamond-633'))).toBeLessThan(
			a.expanded_uncertainty_k!
		);
	});

	it('JCAMP-DX pair', () => {
		const r = analyzePair(
			{ stokes: read('ge-785-stokes.jdx'), antiStokes: read('ge-785-anti-stokes.jdx') },
			{
				laserNm: 785,
				modes: [300.7],
				lineshape: 'gaussian',
				exposureStokesS: 2,
				exposureAntiStokesS: 2,
				response: C
			}
		);
		expect(Math.abs(r.temperature_k! - trueT('ge-785'))).toBeLessThan(r.expanded_uncertainty_k!);
	});

	it('combined file with a dark file and spikes equals the same data as two files', () => {
		const options: AnalyzeOptions = {
			laserNm: 785,
			modes: [520.7],
			exposureStokesS: 2,
			exposureAntiStokesS: 2,
			response: C,
			baseline: { kind: 'polynomial' }
		};
		const combined = read('si-785-combined.csv');
		const dark = read('si-785-dark.csv');
		const r = analyzePair({ combined, dark }, options);
		expect(Math.abs(r.temperature_k! - trueT('si-785-combined'))).toBeLessThan(
			r.expanded_uncertainty_k!
		);
		// The generator put three spikes in the file (scripts/make-fixtures.ts).
		expect(r.spikes_removed).toBe(3);
		expect(r.flags.filter((f) => f.code === 'spikes-removed')).toHaveLength(1);
		// Split by hand at the laser line: the same windows give the same reading.
		const lines = combined.text.split('\n');
		const headerAndComments = lines.slice(0, 2);
		const data = lines.slice(2).filter((l) => l.trim() !== '');
		const negative = data.filter((l) => l.startsWith('-'));
		const positive = data.filter((l) => !l.startsWith('-'));
		const two = analyzePair(
			{
				stokes: { name: 's.csv', text: [...headerAndComments, ...positive].join('\n') },
				antiStokes: { name: 'as.csv', text: [...headerAndComments, ...negative].join('\n') },
				dark
			},
			options
		);
		expect(two.temperature_k).toBe(r.temperature_k);
	});

	it('the reading is plain JSON with the public field names', () => {
		const { inputs, options } = si532();
		const j = toJson(analyzePair(inputs, options));
		for (const k of [
			'temperature_k',
			'u_temperature_k',
			'expanded_uncertainty_k',
			'coverage_factor',
			'method',
			'modes',
			'budget',
			'flags'
		]) {
			expect(j).toHaveProperty(k);
		}
		expect(JSON.stringify(j)).not.toContain('NaN');
	});
});

describe('analyzePair with a response curve', () => {
	// A flat curve R = 1 on both sides means C = 1: the same T as the constant C = 1.
	const curve = {
		name: 'response.csv',
		text: ['shift,response', ...[-2000, -1000, 0, 1000, 2000].map((x) => `${x},1`)].join('\n')
	};

	it('gives the temperature of the equal constant C', () => {
		const { inputs, options } = si532();
		const a = analyzePair(inputs, options);
		const b = analyzePair(
			{ ...inputs, responseCurve: curve },
			{ ...options, response: undefined, uResponseRelative: 0.01 }
		);
		expect(b.temperature_k).toBeCloseTo(a.temperature_k!, 9);
	});

	it('refuses a curve without its uncertainty', () => {
		const { inputs, options } = si532();
		const e = refusal(() =>
			analyzePair({ ...inputs, responseCurve: curve }, { ...options, response: undefined })
		);
		expect(e.code).toBe('missing-response-uncertainty');
		expect(e.message).toContain('response.csv');
	});
});

describe('analyzePair refusals', () => {
	it('a missing response calibration', () => {
		const { inputs, options } = si532();
		const e = refusal(() => analyzePair(inputs, { ...options, response: undefined }));
		expect(e.code).toBe('missing-response');
	});

	it('a missing window', () => {
		const { inputs, options } = si532();
		const e = refusal(() => analyzePair({ ...inputs, antiStokes: undefined }, options));
		expect(e.code).toBe('missing-input');
	});

	it('Stokes and anti-Stokes files swapped', () => {
		const { inputs, options } = si532();
		const e = refusal(() =>
			analyzePair({ ...inputs, stokes: inputs.antiStokes, antiStokes: inputs.stokes }, options)
		);
		expect(e.code).toBe('wrong-side');
		expect(e.message).toContain('si-532-anti-stokes.csv');
	});

	it('a laser wavenumber not above the mode', () => {
		const { inputs, options } = si532();
		// 10⁷/20,000 nm = 500 cm⁻¹ < 520.7 cm⁻¹ (exact arithmetic).
		const e = refusal(() => analyzePair(inputs, { ...options, laserNm: 20000 }));
		expect(e.code).toBe('laser-not-above-mode');
	});

	it('no data at the band: the mode inside the filter cut-off', () => {
		const { inputs, options } = si532();
		const e = refusal(() => analyzePair(inputs, { ...options, filterCutoffCm1: 700 }));
		expect(e.code).toBe('no-data-at-band');
		expect(e.message).toContain('filter cut-off');
	});

	it('no data at the band: a mode the windows do not cover', () => {
		const { inputs, options } = si532();
		const e = refusal(() => analyzePair(inputs, { ...options, modes: [300] }));
		expect(['no-data-at-band', 'axis-ambiguous']).toContain(e.code);
		expect(e.message).toContain('si-532-stokes.csv');
	});

	it('a clipped Stokes band is refused, or fitted with a warning when allowed', () => {
		const { inputs, options } = si532();
		// Clip the band at a 13-bit full scale, 2¹³ − 1 = 8191 counts (exact arithmetic; common ADC depth).
		const clipped = {
			name: 'clipped.csv',
			text: inputs.stokes!.text.replace(/,(\d+)$/gm, (_m, c) => `,${Math.min(Number(c), 8191)}`)
		};
		const e = refusal(() => analyzePair({ ...inputs, stokes: clipped }, options));
		expect(e.code).toBe('saturated-band');
		expect(e.message).toContain('clipped.csv');
		const r = analyzePair({ ...inputs, stokes: clipped }, { ...options, allowSaturatedBand: true });
		const f = r.flags.find((x) => x.code === 'saturation');
		expect(f?.severity).toBe('warning');
	});
});
