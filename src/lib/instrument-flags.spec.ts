import { describe, expect, it } from 'vitest';
import {
	chooseCalibration,
	instrumentFlags,
	MODE_MATCH_CM1,
	splitAtCutoff,
	type CalibrationCandidate
} from './instrument-flags';

const day = (s: string) => new Date(`${s}T00:00:00Z`);
const cal = (id: number, over: Partial<CalibrationCandidate> = {}): CalibrationCandidate => ({
	id,
	method: 'reference-run',
	modeCm1: 520.7,
	status: 'active',
	validFrom: day('2026-01-01'),
	validUntil: null,
	createdAt: day('2026-01-01'),
	...over
});

describe('chooseCalibration', () => {
	const at = day('2026-06-01');

	it('takes an active calibration made at the band, the most recently begun', () => {
		const chosen = chooseCalibration(
			[cal(1), cal(2, { validFrom: day('2026-03-01') }), cal(3, { status: 'retired' })],
			520.7,
			at
		);
		expect(chosen?.id).toBe(2);
	});

	it('prefers one still valid at the acquisition time over a newer expired one', () => {
		const chosen = chooseCalibration(
			[cal(1), cal(2, { validFrom: day('2026-03-01'), validUntil: day('2026-05-01') })],
			520.7,
			at
		);
		expect(chosen?.id).toBe(1);
		// With only the expired one, it is still used (the reading then carries a warning).
		expect(chooseCalibration([cal(2, { validUntil: day('2026-05-01') })], 520.7, at)?.id).toBe(2);
	});

	it('skips calibrations of another band or not yet begun; a constant fits any band', () => {
		expect(chooseCalibration([cal(1, { modeCm1: 1332.5 })], 520.7, at)).toBeNull();
		expect(
			chooseCalibration([cal(1, { modeCm1: 520.7 + MODE_MATCH_CM1 + 0.1 })], 520.7, at)
		).toBeNull();
		expect(chooseCalibration([cal(1, { validFrom: day('2026-07-01') })], 520.7, at)).toBeNull();
		expect(
			chooseCalibration([cal(5, { method: 'constant', modeCm1: undefined })], 1332.5, at)?.id
		).toBe(5);
	});
});

describe('a profile edit that changes the laser or detector', () => {
	it('stops the calibrations made with the earlier set-up from applying', () => {
		const made = { madeWith: { laserNm: 532, detector: 'photon-counting' as const } };
		const at = day('2026-06-01');
		const now = { laserNm: 532, detector: 'photon-counting' as const };
		expect(chooseCalibration([cal(1, made)], 520.7, at, now)?.id).toBe(1);
		expect(chooseCalibration([cal(1, made)], 520.7, at, { ...now, laserNm: 633 })).toBeNull();
		expect(chooseCalibration([cal(1, made)], 520.7, at, { ...now, detector: 'energy' })).toBeNull();
	});
});

describe('splitAtCutoff', () => {
	it('keeps bands above the cut-off only (at the cut-off is out)', () => {
		expect(splitAtCutoff([60, 90, 520.7], 90)).toEqual({ kept: [520.7], below: [60, 90] });
	});
});

describe('instrumentFlags', () => {
	const profile = { laserNm: 532, detector: 'photon-counting' as const, filterCutoffCm1: 90 };
	const settings = { laser_nm: 532, detector: 'photon-counting' as const };

	it('says nothing when the measurement matches its profile and calibration', () => {
		expect(
			instrumentFlags({ settings, profile, calibration: cal(1), at: day('2026-06-01') })
		).toEqual([]);
		expect(instrumentFlags({ settings, profile: null, calibration: null, at: new Date() })).toEqual(
			[]
		);
	});

	it('warns of an expired calibration, another laser or detector, and a band left out', () => {
		const flags = instrumentFlags({
			settings: { laser_nm: 532.5, detector: 'energy', modes_below_cutoff: [60] },
			profile,
			calibration: cal(7, { validUntil: day('2026-05-01') }),
			at: day('2026-06-01')
		});
		expect(flags.map((f) => [f.code, f.severity])).toEqual([
			['calibration-expired', 'warning'],
			['laser-differs-from-profile', 'warning'],
			['detector-differs-from-profile', 'warning'],
			['below-filter-cutoff', 'warning']
		]);
		expect(flags[0].message).toContain('2026-05-01');
		expect(flags[3].mode_cm1).toBe(60);
	});
});
