import { describe, expect, it } from 'vitest';
import {
	beyondThreeSigma,
	controlChart,
	controlLimits,
	D2,
	movingRangeBeyond,
	outsideSpecification,
	runOneSide,
	trend,
	twoOfThreeBeyondTwoSigma,
	violationsAt,
	type ControlLimits
} from './control-chart';

// Limits with centre 0 and σ̂ = 1, so the rules can be tested on plain sequences.
const unit: ControlLimits = {
	baseline: 20,
	centre: 0,
	mrBar: D2,
	sigma: 1,
	ucl: 3,
	lcl: -3,
	mrUcl: 3.267 * D2
};

describe('control limits', () => {
	it('match the hand computation with d₂ = 1.128', () => {
		// 10, 12, 11, 14, 13: mean 12; moving ranges 2, 1, 3, 1 → MR̄ = 1.75;
		// σ̂ = 1.75 / 1.128 = 1.551418…; limits 12 ± 4.654255…; MR limit 3.267 · 1.75 = 5.71725.
		const l = controlLimits([10, 12, 11, 14, 13]);
		expect(D2).toBe(1.128);
		expect(l.centre).toBe(12);
		expect(l.mrBar).toBeCloseTo(1.75, 12);
		expect(l.sigma).toBeCloseTo(1.5514184, 6);
		expect(l.ucl).toBeCloseTo(16.6542553, 6);
		expect(l.lcl).toBeCloseTo(7.3457447, 6);
		expect(l.mrUcl).toBeCloseTo(5.71725, 10);
	});

	it('take only the baseline points and keep specification limits apart', () => {
		const l = controlLimits([10, 12, 11, 14, 13, 100, 200], 5, { usl: 15, lsl: 9 });
		expect(l.baseline).toBe(5);
		expect(l.centre).toBe(12);
		expect(l.usl).toBe(15);
		expect(l.lsl).toBe(9);
	});

	it('refuse fewer than two baseline points', () => {
		expect(() => controlLimits([1])).toThrow();
	});
});

describe('run rules', () => {
	it('one point beyond 3σ', () => {
		expect(beyondThreeSigma([0, 1, -3.5, 0.2], unit)?.indices).toEqual([2]);
		expect(beyondThreeSigma([0, 2.9, -2.9, 1], unit)).toBeNull();
	});

	it('8 in a row on one side of the centre line', () => {
		const run = [-1, 0.1, 0.2, 0.3, 0.1, 0.5, 0.2, 0.4, 0.1, -0.2];
		expect(runOneSide(run, unit)?.indices).toEqual([1, 2, 3, 4, 5, 6, 7, 8]);
		const seven = [-1, 0.1, 0.2, 0.3, 0.1, 0.5, 0.2, 0.4, -0.1];
		expect(runOneSide(seven, unit)).toBeNull();
	});

	it('2 of 3 beyond 2σ on one side', () => {
		expect(twoOfThreeBeyondTwoSigma([0, 2.5, 1, 2.2, 0], unit)?.indices).toEqual([1, 3]);
		// Beyond 2σ but on opposite sides does not count.
		expect(twoOfThreeBeyondTwoSigma([0, 2.5, -2.5, 0, 2.1], unit)).toBeNull();
	});

	it('6 in a row steadily increasing or decreasing', () => {
		expect(trend([5, 1, 2, 3, 4, 5, 6, 2])?.indices).toEqual([1, 2, 3, 4, 5, 6]);
		expect(trend([6, 5, 4, 3, 2, 1])?.indices).toEqual([0, 1, 2, 3, 4, 5]);
		expect(trend([1, 2, 3, 4, 5, 5, 6])).toBeNull();
	});

	it('a moving range above D₄·MR̄', () => {
		expect(movingRangeBeyond([0, 0.5, 4.5, 4], unit)?.indices).toEqual([2]);
		expect(movingRangeBeyond([0, 1, 2, 1], unit)).toBeNull();
	});

	it('each violation says what happened in a sentence', () => {
		const chart = controlChart([10, 12, 11, 14, 13, 12, 11, 30], { baseline: 7 });
		const rules = chart.violations.map((v) => v.rule);
		expect(rules).toContain('beyond-3-sigma');
		expect(chart.violations[0].sentence).toMatch(/#8/);
	});

	it('a point outside the owner’s specification limits, inside the control limits', () => {
		// Limits 0 ± 3 (unit chart); specification 0 ± 1.5 is tighter, so 2 breaks it, not 3σ.
		const spec = { ...unit, usl: 1.5, lsl: -1.5 };
		expect(outsideSpecification([0, 2, -0.5, -1.6, 1.5], spec)?.indices).toEqual([1, 3]);
		expect(outsideSpecification([0, 2], unit)).toBeNull();
		expect(beyondThreeSigma([0, 2, -0.5, -1.6], spec)).toBeNull();
	});

	it('name the rules a given point brings up', () => {
		const chart = controlChart([10, 12, 11, 14, 13, 12, 11, 30], { baseline: 7, usl: 20 });
		expect(violationsAt(chart, 7).map((v) => v.rule)).toEqual(
			expect.arrayContaining(['beyond-3-sigma', 'outside-specification'])
		);
		expect(violationsAt(chart, 2)).toEqual([]);
	});
});
