// Password-guessing brake for every way in (the sign-in form and better-auth's JSON route), built on
// rate-limiter-flexible's memory store. Failures are counted per account and per client address;
// past a free allowance each further failure doubles the wait, up to a cap. The library's own limiter
// is keyed by a forwarded header and by path only, so it cannot tell accounts apart (see options.ts).
// One process keeps its own counts: with several instances each one brakes on its own.
import { RateLimiterMemory } from 'rate-limiter-flexible';

export interface LimiterPolicy {
	freeFailuresPerAccount: number;
	freeFailuresPerAddress: number;
	firstWait_s: number;
	maxWait_s: number;
	/** Failures older than this are forgotten. */
	memory_s: number;
}

export const DEFAULT_POLICY: LimiterPolicy = {
	freeFailuresPerAccount: 5,
	// A lab behind one NAT address shares it, so the address allowance is wider than the account's.
	freeFailuresPerAddress: 20,
	firstWait_s: 1,
	maxWait_s: 15 * 60,
	memory_s: 60 * 60
};

export interface Refusal {
	retryAfter_s: number;
	message: string;
}

export class SignInLimiter {
	private failures: RateLimiterMemory;
	private blocks = new RateLimiterMemory({ keyPrefix: 'signin-block', points: 1, duration: 1 });

	constructor(private policy: LimiterPolicy = DEFAULT_POLICY) {
		this.failures = new RateLimiterMemory({ keyPrefix: 'signin-fail', points: Number.MAX_SAFE_INTEGER, duration: policy.memory_s });
	}

	/** A refusal while either the account or the address is waiting out its delay, else null. */
	async check(email: string, address: string): Promise<Refusal | null> {
		const waits = await Promise.all(
			keys(email, address).map(async ({ key }) => {
				const res = await this.blocks.get(key);
				return res && res.consumedPoints > 1 ? res.msBeforeNext : 0;
			})
		);
		const wait_ms = Math.max(...waits);
		if (wait_ms <= 0) return null;
		const retryAfter_s = Math.ceil(wait_ms / 1000);
		const at = new Date(Date.now() + retryAfter_s * 1000).toISOString().slice(11, 19);
		return { retryAfter_s, message: `too many failed sign-ins; try again in ${describeWait(retryAfter_s)} (after ${at} UTC)` };
	}

	async failed(email: string, address: string) {
		for (const { key, free } of keys(email, address, this.policy)) {
			const res = await this.failures.penalty(key, 1);
			const over = res.consumedPoints - free;
			if (over < 0) continue;
			const wait_s = Math.min(this.policy.maxWait_s, this.policy.firstWait_s * 2 ** Math.min(over, 30));
			await this.blocks.block(key, wait_s);
		}
	}

	/** A right password clears the account's count; the address keeps its count so guessing across accounts still brakes. */
	async succeeded(email: string) {
		await this.failures.delete(accountKey(email));
	}
}

const accountKey = (email: string) => `account:${email.trim().toLowerCase().slice(0, 320)}`;

function keys(email: string, address: string, policy: LimiterPolicy = DEFAULT_POLICY) {
	return [
		{ key: accountKey(email), free: policy.freeFailuresPerAccount },
		{ key: `address:${address}`, free: policy.freeFailuresPerAddress }
	];
}

export function describeWait(seconds: number): string {
	if (seconds < 90) return `${seconds} s`;
	return `${Math.ceil(seconds / 60)} min`;
}
