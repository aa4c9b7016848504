import { describe, expect, it } from 'vitest';
import { formatTemperature, kelvinToCelsius, roundToUncertainty } from './format';

// JCGM 100:2008 §7.2.6: the uncertainty to at most two significant digits, the value to the
// same decimal place. Expected strings below are exact arithmetic on the inputs.
describe('roundToUncertainty (JCGM 100 §7.2.6)', () => {
	it.each([
		[412.2836, 2.134, '412.3', '2.1'],
		[412.2836, 0.04567, '412.284', '0.046'],
		[412.2836, 13.62, '412', '14'],
		[1234.5, 123.4, '1230', '120'],
		[300.04, 9.96, '300', '10'],
		[300.04, 0.996, '300.0', '1.0']
	])('%f ± %f → %s ± %s', (x, u, value, uncertainty) => {
		const r = roundToUncertainty(x, u);
		expect(r.value).toBe(value);
		expect(r.uncertainty).toBe(uncertainty);
	});
});

describe('formatTemperature', () => {
	it('writes K with k and °C beside it (design.md)', () => {
		expect(formatTemperature(412.2836, 2.134, 2)).toBe(
			'412.3 K ± 2.1 K (k = 2)  (139.1 °C ± 2.1 °C)'
		);
	});

	it('0 °C is 273.15 K (SI definition)', () => {
		expect(kelvinToCelsius(273.15)).toBe(0);
	});
});
