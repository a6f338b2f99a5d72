// The one seeded generator of the project: the Langevin simulator, the agent's simulated runs and
// the tests' Monte Carlo all draw from it. xoshiro128** uniforms and ziggurat Gaussians.
//
// xoshiro128** (Blackman & Vigna 2018, "Scrambled linear pseudorandom number generators") is
// small, fast in 32-bit integer arithmetic and passes the usual statistical batteries; its
// 128-bit state is filled from the seed by splitmix32 so that nearby seeds give unrelated
// streams. Same seed → same sequence: the integer part uses only Math.imul and shifts; the
// Gaussians add table look-ups and, rarely, Math.exp/Math.log (bit-identical on one engine).

/** A seed: any finite number (its 32-bit integer part is used) or a string (hashed). */
export type Seed = number | string;

function hashString(text: string): number {
	// FNV-1a, 32 bit: enough to turn a label into a well-spread integer seed.
	let h = 0x811c9dc5;
	for (let i = 0; i < text.length; i++) {
		h ^= text.charCodeAt(i);
		h = Math.imul(h, 0x01000193);
	}
	return h >>> 0;
}

function seedToUint32(seed: Seed): number {
	if (typeof seed === 'string') return hashString(seed);
	if (typeof seed !== 'number' || !Number.isFinite(seed)) {
		throw new RangeError(`seed must be a finite number or a string, got ${String(seed)}`);
	}
	// Keep the high part of large seeds too, so 1 and 2^32+1 differ.
	const lo = seed >>> 0;
	const hi = Math.floor(seed / 4294967296) >>> 0;
	return (lo ^ Math.imul(hi, 0x9e3779b9)) >>> 0;
}

/** splitmix32 step (a 32-bit variant of Steele, Lea & Flood's SplitMix): state → output. */
function splitmix32(state: { s: number }): number {
	state.s = (state.s + 0x9e3779b9) | 0;
	let z = state.s;
	z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
	z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
	return (z ^ (z >>> 16)) >>> 0;
}

/**
 * A child seed for stream `index` of `seed`, so that trajectory i of an ensemble draws the same
 * numbers however the ensemble is split between workers or reordered.
 */
export function deriveSeed(seed: Seed, index: number): number {
	if (!Number.isInteger(index) || index < 0) {
		throw new RangeError(`stream index must be a non-negative integer, got ${index}`);
	}
	const st = { s: seedToUint32(seed) ^ Math.imul(index + 1, 0x632be5ab) };
	splitmix32(st);
	return splitmix32(st);
}

const TWO_POW_MINUS_32 = 1 / 4294967296;
const TWO_POW_MINUS_53 = 1 / 9007199254740992;

// Ziggurat tables for the standard normal, 128 layers (Marsaglia & Tsang 2000, "The ziggurat
// method for generating random variables", J. Stat. Softw. 5(8)): R is the start of the tail,
// V the common area of the layers. Computed once at load time from those two constants.
const ZIG_R = 3.442619855899;
const ZIG_V = 9.91256303526217e-3;
const KN = new Uint32Array(128);
const WN = new Float64Array(128);
const FN = new Float64Array(128);
(() => {
	const m1 = 2147483648;
	let dn = ZIG_R;
	let tn = dn;
	const q = ZIG_V / Math.exp(-0.5 * dn * dn);
	KN[0] = Math.floor((dn / q) * m1);
	KN[1] = 0;
	WN[0] = q / m1;
	WN[127] = dn / m1;
	FN[0] = 1;
	FN[127] = Math.exp(-0.5 * dn * dn);
	for (let i = 126; i >= 1; i--) {
		dn = Math.sqrt(-2 * Math.log(ZIG_V / dn + Math.exp(-0.5 * dn * dn)));
		KN[i + 1] = Math.floor((dn / tn) * m1);
		tn = dn;
		FN[i] = Math.exp(-0.5 * dn * dn);
		WN[i] = dn / m1;
	}
})();

/**
 * xoshiro128** generator with standard normal draws by the ziggurat method (about 99 % of draws
 * cost one 32-bit output, a table look-up and a multiply; Math.log is needed only in the rare
 * wedge and tail cases, which is what makes it several times faster than Box–Muller here).
 */
export class Rng {
	private s0: number;
	private s1: number;
	private s2: number;
	private s3: number;

	constructor(seed: Seed) {
		const st = { s: seedToUint32(seed) };
		this.s0 = splitmix32(st) | 0;
		this.s1 = splitmix32(st) | 0;
		this.s2 = splitmix32(st) | 0;
		this.s3 = splitmix32(st) | 0;
		if ((this.s0 | this.s1 | this.s2 | this.s3) === 0) this.s0 = 1; // the all-zero state is a fixed point
	}

	/** A generator with an explicit 128-bit state (four 32-bit words, not all zero). */
	static fromState(state: [number, number, number, number]): Rng {
		if (!Array.isArray(state) || state.length !== 4 || state.some((w) => !Number.isInteger(w))) {
			throw new RangeError('state must be four 32-bit integers');
		}
		if (state.every((w) => (w | 0) === 0)) throw new RangeError('state must not be all zero');
		const r = new Rng(0);
		[r.s0, r.s1, r.s2, r.s3] = state.map((w) => w | 0);
		return r;
	}

	/** Next 32-bit output as an unsigned integer (the reference xoshiro128** next()). */
	nextUint32(): number {
		return this.nextInt32() >>> 0;
	}

	/** The same output read as a signed 32-bit integer. */
	nextInt32(): number {
		const s1 = this.s1;
		const m = Math.imul(s1, 5);
		const result = Math.imul((m << 7) | (m >>> 25), 9);
		const t = s1 << 9;
		this.s2 ^= this.s0;
		this.s3 ^= this.s1;
		this.s1 ^= this.s2;
		this.s0 ^= this.s3;
		this.s2 ^= t;
		this.s3 = (this.s3 << 11) | (this.s3 >>> 21);
		return result;
	}

	/** Uniform on [0, 1) with 53 random bits. */
	nextFloat(): number {
		const hi = this.nextUint32() >>> 5; // 27 bits
		const lo = this.nextUint32() >>> 6; // 26 bits
		return (hi * 67108864 + lo) * TWO_POW_MINUS_53;
	}

	/** Uniform on (0, 1), never 0 (for logarithms). */
	private nextOpenFloat(): number {
		return (this.nextUint32() + 0.5) * TWO_POW_MINUS_32;
	}

	/** Standard normal N(0, 1). */
	nextGaussian(): number {
		const hz = this.nextInt32();
		const iz = hz & 127;
		if ((hz < 0 ? -hz : hz) < KN[iz]) return hz * WN[iz];
		return this.gaussianSlow(hz, iz);
	}

	/** The wedge and tail cases of the ziggurat (Marsaglia & Tsang's nfix). */
	private gaussianSlow(hz: number, iz: number): number {
		for (;;) {
			const x = hz * WN[iz];
			if (iz === 0) {
				// Tail beyond R: Marsaglia's exponential rejection.
				let tx: number;
				let ty: number;
				do {
					tx = -Math.log(this.nextOpenFloat()) / ZIG_R;
					ty = -Math.log(this.nextOpenFloat());
				} while (ty + ty < tx * tx);
				return hz > 0 ? ZIG_R + tx : -ZIG_R - tx;
			}
			if (FN[iz] + this.nextOpenFloat() * (FN[iz - 1] - FN[iz]) < Math.exp(-0.5 * x * x)) return x;
			hz = this.nextInt32();
			iz = hz & 127;
			if ((hz < 0 ? -hz : hz) < KN[iz]) return hz * WN[iz];
		}
	}

	/** Exponential waiting time of a process with `rate` events per unit time. */
	nextExponential(rate: number): number {
		return -Math.log(this.nextOpenFloat()) / rate;
	}

	/** Integer in [0, n). */
	nextInt(n: number): number {
		return Math.floor(this.nextFloat() * n);
	}

	/** Two independent N(0, 1) draws into out[0], out[1]. */
	gaussianPair(out: Float64Array | number[]): void {
		out[0] = this.nextGaussian();
		out[1] = this.nextGaussian();
	}
}

/** A generator for `seed`: same seed → same sequence. */
export function createRng(seed: Seed): Rng {
	return new Rng(seed);
}

/** Uniforms on [0, 1) from a generator for `seed`, as a plain function (for code that takes `() => number`). */
export function uniformStream(seed: Seed): () => number {
	const rng = new Rng(seed);
	return () => rng.nextFloat();
}
