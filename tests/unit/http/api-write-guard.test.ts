import { describe, expect, it } from 'vitest';
import { apiWriteProblem } from '../../../src/lib/server/http/api-write-guard';

const ORIGIN = 'https://lab.example';
const req = (method: string, pathname: string, headers: Record<string, string>) => ({ method, pathname, headers: new Headers(headers) });
const json = { 'content-type': 'application/json', 'content-length': '2' };

describe('apiWriteProblem', () => {
	it('lets reads and same-origin JSON writes through', () => {
		expect(apiWriteProblem(req('GET', '/api/setups', {}), ORIGIN)).toBeNull();
		expect(apiWriteProblem(req('POST', '/api/setups', { origin: ORIGIN, ...json }), ORIGIN)).toBeNull();
		expect(apiWriteProblem(req('POST', '/signin', { origin: 'https://evil.example' }), ORIGIN)).toBeNull();
	});

	it('refuses another origin even with a token, and a missing origin without one', () => {
		expect(
			apiWriteProblem(req('POST', '/api/setups', { origin: 'https://evil.example', authorization: 'Bearer x', ...json }), ORIGIN)
		).toMatchObject({ status: 403 });
		expect(apiWriteProblem(req('DELETE', '/api/setups/1', {}), ORIGIN)).toMatchObject({
			status: 403,
			message: expect.stringMatching(/no Origin/)
		});
		expect(apiWriteProblem(req('POST', '/api/setups', { authorization: 'Bearer pwt_abc', ...json }), ORIGIN)).toBeNull();
	});

	it('wants JSON bodies, multipart only on the import route', () => {
		const form = { origin: ORIGIN, 'content-type': 'multipart/form-data; boundary=x', 'content-length': '10' };
		expect(
			apiWriteProblem(req('POST', '/api/setups', { origin: ORIGIN, 'content-type': 'text/plain', 'content-length': '3' }), ORIGIN)
		).toMatchObject({ status: 415 });
		expect(apiWriteProblem(req('POST', '/api/setups', form), ORIGIN)).toMatchObject({ status: 415 });
		expect(apiWriteProblem(req('POST', '/api/setups/abc/import', form), ORIGIN)).toBeNull();
		expect(apiWriteProblem(req('POST', '/api/incidents/1/resolve', { origin: ORIGIN, 'content-length': '0' }), ORIGIN)).toBeNull();
	});
});
