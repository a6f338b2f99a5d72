// The reset-mail cooldown with an injected clock: one message per address per window.
import { describe, expect, it } from 'vitest';
import { createCooldown } from '../../../src/lib/server/people/cooldown';

describe('createCooldown', () => {
	it('lets one through per key per window and forgets keys once the window has passed', () => {
		let t_ms = 0;
		const cooldown = createCooldown(60_000, () => t_ms);
		expect(cooldown.take('ada@lab.test')).toBe(true);
		expect(cooldown.take('ada@lab.test')).toBe(false);
		expect(cooldown.take('bob@lab.test')).toBe(true);
		t_ms = 59_999;
		expect(cooldown.take('ada@lab.test')).toBe(false);
		t_ms = 60_000;
		expect(cooldown.take('ada@lab.test')).toBe(true);
	});
});
