import { describe, expect, it } from 'vitest';
import {
	checkBandCoverage,
	checkLaserAboveMode,
	detectAxisUnit,
	laserWavenumber,
	splitCombined,
	toRamanShift,
	toShiftWindow
} from './axis';
import { parseSpectrum, type ParsedSpectrum } from './parse';
import { EngineError } from './types';

function spec(xs: number[], name = 'w.csv', header?: string): ParsedSpectrum {
	const lines = xs.map((x, i) => `${x},${10 + i}`);
	if (header) lines.unshift(header);
	return parseSpectrum({ name, text: lines.join('\n') });
}
const range = (a: number, b: number, n: number) =>
	Array.from({ length: n }, (_, i) => a + ((b - a) * i) / (n - 1));

function refusal(fn: () => unknown): EngineError {
	try {
		fn();
	} catch (e) {
		expect(e).toBeInstanceOf(EngineError);
		return e as EngineError;
	}
	throw new Error('expected a refusal');
}

describe('axis conversion (exact arithmetic: ν̃ = 10⁷/λ, Δν̃ = ν̃_L − ν̃_s)', () => {
	it('laser wavenumber of 532 nm', () => {
		expect(laserWavenumber(532)).toBe(1e7 / 532);
	});

	it('wavelength to shift', () => {
		const s = toRamanShift([547.15], 'wavelength', 532);
		expect(s[0]).toBeCloseTo(1e7 / 532 - 1e7 / 547.15, 10);
		// 1e7/532 − 1e7/547.15 = 520.46… cm⁻¹ (exact arithmetic).
		expect(s[0]).toBeCloseTo(520.4688, 3);
	});

	it('absolute wavenumber to shift', () => {
		const s = toRamanShift([18000], 'wavenumber', 532);
		expect(s[0]).toBeCloseTo(1e7 / 532 - 18000, 10);
	});

	it('Stokes at ν̃_L − ν̃_m and anti-Stokes at ν̃_L + ν̃_m (physics.md §1)', () => {
		const nuL = laserWavenumber(785);
		const s = toRamanShift([1e7 / (nuL - 520.7), 1e7 / (nuL + 520.7)], 'wavelength', 785);
		expect(s[0]).toBeCloseTo(520.7, 9);
		expect(s[1]).toBeCloseTo(-520.7, 9);
	});
});

describe('toShiftWindow', () => {
	const opts = { laserNm: 532, modes: [520.7] };

	it('a Stokes window given in nm is ascending in shift', () => {
		const w = toShiftWindow(spec(range(540, 560, 50)), 'stokes', opts);
		expect(w.unit).toBe('wavelength');
		expect(w.shift[0]).toBeCloseTo(1e7 / 532 - 1e7 / 540, 9);
		for (let i = 1; i < w.shift.length; i++) expect(w.shift[i]).toBeGreaterThan(w.shift[i - 1]);
	});

	it('an absolute-wavenumber window is reversed into ascending shift, counts follow', () => {
		const nuL = laserWavenumber(532);
		const xs = range(nuL - 600, nuL - 400, 50);
		const w = toShiftWindow(spec(xs, 'abs.csv', 'absolute wavenumber,counts'), 'stokes', opts);
		expect(w.unit).toBe('wavenumber');
		expect(w.shift[0]).toBeCloseTo(400, 6);
		// Highest absolute wavenumber (row 51, the last) is the smallest shift.
		expect(w.counts[0]).toBe(10 + 49);
		expect(w.rows[0]).toBe(51);
	});

	it('anti-Stokes as negative shifts and as positive magnitudes give the same window', () => {
		const neg = toShiftWindow(spec(range(-600, -450, 40)), 'anti-stokes', opts);
		const pos = toShiftWindow(
			parseSpectrum({
				name: 'pos.csv',
				// Same points as magnitudes: counts attached to the same |shift|.
				text: range(450, 600, 40)
					.map((x, i) => `${x},${10 + (39 - i)}`)
					.join('\n')
			}),
			'anti-stokes',
			opts
		);
		expect(pos.shift.length).toBe(neg.shift.length);
		pos.shift.forEach((v, i) => expect(v).toBeCloseTo(neg.shift[i], 9));
		expect(Array.from(pos.counts)).toEqual(Array.from(neg.counts));
	});

	it('refuses a Stokes file that holds anti-Stokes data', () => {
		const e = refusal(() => toShiftWindow(spec(range(-600, -450, 40), 's.csv'), 'stokes', opts));
		expect(e.code).toBe('wrong-side');
		expect(e.message).toContain('s.csv');
		expect(e.message).toContain('anti-Stokes');
	});

	it('refuses an anti-Stokes file that holds Stokes data (wavelength above the laser)', () => {
		const e = refusal(() =>
			toShiftWindow(
				spec(range(540, 560, 40), 'as.csv', 'wavelength (nm),counts'),
				'anti-stokes',
				opts
			)
		);
		expect(e.code).toBe('wrong-side');
		expect(e.message).toContain('as.csv');
	});

	it('refuses a laser wavenumber not above the mode', () => {
		// 10⁷/20000 nm = 500 cm⁻¹ < 520.7 cm⁻¹ (exact arithmetic).
		const e = refusal(() => checkLaserAboveMode(20000, [520.7]));
		expect(e.code).toBe('laser-not-above-mode');
		expect(e.message).toContain('520.7');
	});

	it('an explicit unit overrides the guess', () => {
		const w = toShiftWindow(spec(range(540, 560, 50)), 'stokes', { ...opts, unit: 'raman-shift' });
		expect(w.unit).toBe('raman-shift');
		expect(w.shift[0]).toBe(540);
	});

	it('refuses an ambiguous axis', () => {
		// x = 540–560 covers a 550 cm⁻¹ mode read as a shift, and also read as nm at 532 nm
		// (shifts 278…680 cm⁻¹, exact arithmetic), so neither reading can be preferred.
		const e = refusal(() =>
			detectAxisUnit(spec(range(540, 560, 50), 'amb.csv'), 532, [550], 'stokes')
		);
		expect(e.code).toBe('axis-ambiguous');
		expect(e.message).toContain('amb.csv');
	});
});

describe('splitCombined', () => {
	it('splits a file spanning both sides at the laser line', () => {
		const xs = range(-700, 700, 281); // step 5 cm⁻¹, includes 0
		const { stokes, antiStokes } = splitCombined(spec(xs, 'both.csv', 'raman shift,counts'), {
			laserNm: 532,
			modes: [520.7]
		});
		expect(antiStokes.side).toBe('anti-stokes');
		expect(antiStokes.shift.length).toBe(140);
		expect(stokes.shift.length).toBe(140);
		expect(antiStokes.shift[antiStokes.shift.length - 1]).toBeLessThan(0);
		expect(stokes.shift[0]).toBeGreaterThan(0);
	});

	it('splits a combined wavelength file', () => {
		const nuL = laserWavenumber(633);
		const xs = range(1e7 / (nuL + 700), 1e7 / (nuL - 700), 300);
		const { stokes, antiStokes } = splitCombined(spec(xs, 'both-nm.csv'), {
			laserNm: 633,
			modes: [520.7]
		});
		expect(stokes.unit).toBe('wavelength');
		expect(antiStokes.shift[0]).toBeCloseTo(-700, 6);
		expect(stokes.shift[stokes.shift.length - 1]).toBeCloseTo(700, 6);
	});

	it('refuses a combined file with one side missing', () => {
		const e = refusal(() =>
			splitCombined(spec(range(100, 700, 100), 'half.csv', 'raman shift,counts'), {
				laserNm: 532,
				modes: [520.7]
			})
		);
		expect(e.code).toBe('too-few-points');
		expect(e.message).toContain('half.csv');
	});
});

describe('checkBandCoverage', () => {
	it('refuses a window with no data at the band', () => {
		const w = toShiftWindow(spec(range(600, 800, 100), 'far.csv'), 'stokes', {
			laserNm: 532,
			modes: [520.7],
			unit: 'raman-shift'
		});
		const e = refusal(() => checkBandCoverage(w, [520.7]));
		expect(e.code).toBe('no-data-at-band');
		expect(e.message).toContain('far.csv');
	});

	it('refuses a band inside the filter cut-off', () => {
		const w = toShiftWindow(spec(range(-300, -50, 100), 'cut.csv'), 'anti-stokes', {
			laserNm: 532,
			modes: [144],
			unit: 'raman-shift'
		});
		const e = refusal(() => checkBandCoverage(w, [144], { filterCutoffCm1: 160 }));
		expect(e.code).toBe('no-data-at-band');
		expect(e.message).toContain('filter cut-off');
	});
});
