import { describe, expect, it } from 'vitest';
import { MATERIAL_MODES } from './measurement-metadata';
import { builtInMaterials, MATERIALS } from './materials';
import { bwhPosition, bwhWidth } from './thermometry/peak-shift';

const TAG = /^\[(C: .+|M|D)\]/;

describe('material library', () => {
	it('gives every built-in value a source tagged as physics.md tags it', () => {
		for (const m of builtInMaterials()) {
			expect(m.modes.length, m.key).toBeGreaterThan(0);
			for (const mode of m.modes) {
				expect(mode.shiftCm1.source, `${m.key} ${mode.name} shift`).toMatch(TAG);
				if (mode.fwhmCm1) expect(mode.fwhmCm1.source, `${m.key} FWHM`).toMatch(TAG);
				if (mode.peakShift?.kind === 'balkanski') expect(mode.peakShift.source).toMatch(TAG);
				if (mode.peakShift?.kind === 'linear')
					expect(mode.peakShift.slopeCm1PerK.source).toMatch(TAG);
				for (const r of mode.alsoReported ?? []) expect(r.source, r.text).toMatch(TAG);
			}
			for (const b of m.otherBands ?? []) expect(b.shiftCm1.source, b.name).toMatch(TAG);
			for (const n of m.notes ?? []) expect(n.source, n.text).toMatch(TAG);
		}
	});

	it('holds silicon at 520.7 cm⁻¹, within the spread physics.md §4 reports', () => {
		const si = MATERIALS.silicon.modes[0];
		expect(si.shiftCm1.value).toBe(520.7);
		// physics.md §4: labs use 520.5–520.9 [M]; Parker 1967 gives 520.2 ± 0.5 [C]; Tsu 521 at 20 °C [C].
		expect(si.shiftCm1.value).toBeGreaterThanOrEqual(520.5);
		expect(si.shiftCm1.value).toBeLessThanOrEqual(520.9);
		expect(Math.abs(si.shiftCm1.value - 520.2)).toBeLessThanOrEqual(0.5 + 0.01);
		expect(Math.abs(si.shiftCm1.value - 521)).toBeLessThan(0.5);
	});

	it('evaluates the silicon Balkanski–Wallis–Haro model as physics.md derives it', () => {
		const model = MATERIALS.silicon.modes[0].peakShift;
		expect(model.kind).toBe('balkanski');
		// physics.md §4, "Values these parameters give [D]": ω(0) 524.87, ω(300 K) 521.85,
		// Γ(300 K) 2.83, ω(600 K) 515.28, ω(1173 K) 498.2 cm⁻¹.
		expect(bwhPosition(0, model.parameters)).toBeCloseTo(524.87, 2);
		expect(bwhPosition(300, model.parameters)).toBeCloseTo(521.85, 2);
		expect(bwhWidth(300, model.parameters)).toBeCloseTo(2.83, 2);
		expect(bwhPosition(600, model.parameters)).toBeCloseTo(515.28, 2);
		expect(bwhPosition(1173, model.parameters)).toBeCloseTo(498.2, 1);
	});

	it('keeps the metadata keys the API takes, with the library’s shifts', () => {
		for (const key of [
			'silicon',
			'germanium',
			'diamond',
			'gan-e2h',
			'sic-4h',
			'tio2-anatase',
			'sapphire'
		] as const) {
			expect(MATERIAL_MODES[key].modes.length, key).toBeGreaterThan(0);
		}
		expect(MATERIAL_MODES.silicon.modes).toEqual([520.7]);
		expect(MATERIAL_MODES['gan-a1lo'].modes).toEqual([734]);
		expect(MATERIAL_MODES.diamond.modes).toEqual([1332.5]);
	});
});
