import { describe, expect, it } from 'vitest';
import { SignInLimiter } from '../../../src/lib/server/auth/signin-limiter';

const policy = { freeFailuresPerAccount: 3, freeFailuresPerAddress: 10, firstWait_s: 60, maxWait_s: 600, memory_s: 3600 };

describe('SignInLimiter', () => {
	it('lets the free failures through, then doubles the wait up to the cap', async () => {
		const limiter = new SignInLimiter(policy);
		const waits: (number | null)[] = [];
		for (let i = 0; i < 8; i++) {
			await limiter.failed('a@lab.test', '10.0.0.1');
			waits.push((await limiter.check('a@lab.test', '10.0.0.9'))?.retryAfter_s ?? null);
		}
		// Seconds are rounded up from the store's remaining milliseconds, so a few ms of test time cannot change them.
		expect(waits).toEqual([null, null, 60, 120, 240, 480, 600, 600]);
	});

	it('keeps accounts apart, matches e-mails case-blind, and says when to come back', async () => {
		const limiter = new SignInLimiter(policy);
		for (let i = 0; i < 3; i++) await limiter.failed('A@Lab.test ', `10.0.0.${i}`);
		expect(await limiter.check('someone-else@lab.test', '10.0.0.50')).toBeNull();
		const refusal = await limiter.check('a@lab.test', '10.0.0.50');
		expect(refusal?.message).toMatch(/try again in 60 s \(after \d\d:\d\d:\d\d UTC\)/);
	});

	it('brakes an address that guesses across many accounts', async () => {
		const limiter = new SignInLimiter(policy);
		for (let i = 0; i < 10; i++) await limiter.failed(`user${i}@lab.test`, '10.0.0.7');
		expect(await limiter.check('fresh@lab.test', '10.0.0.7')).not.toBeNull();
		expect(await limiter.check('fresh@lab.test', '10.0.0.8')).toBeNull();
	});

	it('forgets an account’s failures after a right password', async () => {
		const limiter = new SignInLimiter(policy);
		await limiter.failed('b@lab.test', '10.0.1.1');
		await limiter.failed('b@lab.test', '10.0.1.1');
		await limiter.succeeded('b@lab.test');
		await limiter.failed('b@lab.test', '10.0.1.1');
		expect(await limiter.check('b@lab.test', '10.0.1.2')).toBeNull();
	});
});
