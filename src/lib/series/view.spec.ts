import { describe, expect, it } from 'vitest';
import { seriesView } from './view';

describe('series view', () => {
	it('maps positions, sweeps powers, charts the rest', () => {
		// The demo map carries one laser power on every cell: still a map.
		expect(seriesView({ measurements: 20, placed: 20, powers: 1 })).toBe('map');
		expect(seriesView({ measurements: 5, placed: 0, powers: 5 })).toBe('power-sweep');
		expect(seriesView({ measurements: 12, placed: 0, powers: 1 })).toBe('control-chart');
		expect(seriesView({ measurements: 12, placed: 2, powers: 0 })).toBe('control-chart');
	});
});
