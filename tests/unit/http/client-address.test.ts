import { describe, expect, it } from 'vitest';
import { clientAddress } from '../../../src/lib/server/http/client-address';

describe('clientAddress', () => {
	it('ignores X-Forwarded-For from a peer that is not a trusted proxy', () => {
		expect(clientAddress('203.0.113.9', '10.9.9.9', [])).toBe('203.0.113.9');
		expect(clientAddress('203.0.113.9', '10.9.9.9', ['127.0.0.1'])).toBe('203.0.113.9');
	});

	it('takes the right-most untrusted hop behind a trusted proxy, so a client-prepended entry is not believed', () => {
		expect(clientAddress('127.0.0.1', '1.2.3.4, 198.51.100.7', ['127.0.0.1'])).toBe('198.51.100.7');
		expect(clientAddress('::ffff:127.0.0.1', '198.51.100.7, 10.0.0.2', ['127.0.0.1', '10.0.0.2'])).toBe('198.51.100.7');
	});

	it('uses the peer when a trusted proxy sends no header, and treats IPv4-mapped IPv6 as IPv4', () => {
		expect(clientAddress('::ffff:127.0.0.1', null, ['127.0.0.1'])).toBe('127.0.0.1');
	});
});
