// formatRate: scientific notation whose mantissa stays in [1, 10) after rounding (the usual rule
// of normalized scientific notation, common practice), with the expected strings worked by hand.
import { describe, expect, it } from 'vitest';
import { formatRate } from '../../../src/lib/ui/format';

describe('formatRate', () => {
	it('carries a mantissa that rounds up to 10 into the exponent', () => {
		// 9.996e-5 to 3 significant digits is 10.0e-5 = 1.00e-4.
		expect(formatRate(9.996e-5)).toBe('1 × 10⁻⁴');
		expect(formatRate(-9.9996e-9)).toBe('-1 × 10⁻⁸');
		expect(formatRate(9.9996e12)).toBe('1 × 10¹³');
		// with two significant digits 9.96 already rounds to 10
		expect(formatRate(9.96e-6, 2)).toBe('1 × 10⁻⁵');
	});

	it('leaves mantissas that stay below 10 as they were', () => {
		expect(formatRate(9.994e-5)).toBe('9.99 × 10⁻⁵');
		expect(formatRate(3.2e-4)).toBe('3.2 × 10⁻⁴');
		expect(formatRate(1e-4)).toBe('1 × 10⁻⁴');
		expect(formatRate(0.5)).toBe('0.5');
	});
});
