import { describe, expect, it } from 'vitest';
import { inferSeriesKind, type SeriesProfile } from './kind';

// The cases are the demo scenario's series and the shapes an acquisition PC sends (design.md,
// "series"); the expected kinds follow the rule written beside inferSeriesKind.
const one = (p: Partial<SeriesProfile>): SeriesProfile => ({
	measurements: 1,
	placed: 0,
	batched: 0,
	powers: 0,
	powered: 0,
	timed: 0,
	...p
});

describe('the kind of a series named by a measurement', () => {
	it('is a map when most measurements carry a position, even at one laser power', () => {
		expect(inferSeriesKind(one({ placed: 1, powers: 1, powered: 1 }))).toBe('map');
		expect(
			inferSeriesKind({
				measurements: 20,
				placed: 20,
				batched: 0,
				powers: 1,
				powered: 20,
				timed: 0
			})
		).toBe('map');
	});

	it('is a batch series when measurements carry batch labels', () => {
		expect(inferSeriesKind(one({ batched: 1, timed: 1 }))).toBe('batch');
	});

	it('is a power sweep for several powers, or a power on the first measurement', () => {
		expect(inferSeriesKind(one({ powers: 1, powered: 1 }))).toBe('power-sweep');
		expect(
			inferSeriesKind({ measurements: 5, placed: 0, batched: 0, powers: 5, powered: 5, timed: 0 })
		).toBe('power-sweep');
	});

	it('is a time series when only acquisition times are given', () => {
		expect(inferSeriesKind(one({ timed: 1 }))).toBe('time');
	});

	it('falls back to batch, and a few stray positions do not make a map', () => {
		expect(inferSeriesKind(one({}))).toBe('batch');
		expect(
			inferSeriesKind({ measurements: 12, placed: 2, batched: 0, powers: 1, powered: 12, timed: 0 })
		).toBe('batch');
	});
});
