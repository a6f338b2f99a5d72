// The part of http_ece (the aes128gcm content coding that web-push itself uses) the push catcher calls.
declare module 'http_ece' {
	import type { ECDH } from 'node:crypto';
	export function decrypt(buffer: Buffer, params: { version: 'aes128gcm'; privateKey: ECDH; authSecret: string }): Buffer;
}
