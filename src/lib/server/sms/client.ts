// Text messages through the twilio SDK. Credentials come from TWILIO_ACCOUNT_SID, TWILIO_AUTH_TOKEN
// and TWILIO_FROM. In development, demo and tests the SDK's requests are pointed at the local fake
// (fake.ts): a RequestClient subclass rewrites the https://*.twilio.com origin to the fake's URL, so
// everything else (authentication, form encoding, error objects) stays the SDK's own.
import twilio from 'twilio';
import type RequestClient from 'twilio/lib/base/RequestClient';
import type { SmsConfig } from './config';

export type SmsResult = { ok: true; sid: string } | { ok: false; error: string; permanent: boolean };

export interface SmsClient {
	send(to: string, body: string): Promise<SmsResult>;
}

class RedirectingClient extends twilio.RequestClient {
	constructor(private baseUrl: string) {
		super({ timeout: 15_000 });
	}
	request<TData>(opts: RequestClient.RequestOptions<TData>) {
		return super.request<TData>({ ...opts, uri: opts.uri.replace(/^https:\/\/[^/]+/, this.baseUrl.replace(/\/+$/, '')) });
	}
}

export function createSmsClient(config: SmsConfig): SmsClient {
	const client = twilio(config.accountSid, config.authToken, {
		...(config.baseUrl ? { httpClient: new RedirectingClient(config.baseUrl) } : {}),
		timeout: 15_000
	});
	return {
		async send(to, body) {
			try {
				const message = await client.messages.create({ to, from: config.from, body });
				return { ok: true, sid: message.sid };
			} catch (err) {
				const e = err as Error & { status?: number; code?: number };
				// 4xx (bad number, unverified sender, …) will not get better by itself; 429 and 5xx may.
				const permanent = typeof e.status === 'number' && e.status >= 400 && e.status < 500 && e.status !== 429;
				return { ok: false, error: `${e.status ? `HTTP ${e.status}: ` : ''}${e.message}`, permanent };
			}
		}
	};
}
