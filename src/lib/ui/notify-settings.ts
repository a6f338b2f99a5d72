// Shapes the settings page gets from the push and phone APIs, and the browser side of subscribing.
// Dates arrive as Date from the page's loader and as ISO strings from the JSON API after a change.
export type PushDevice = { id: string; endpoint: string; label: string; createdAt: string | Date; lastSentAt: string | Date | null };
export type PhoneState = { number: string; verifiedAt: string | Date | null; codePending: boolean };

/** The VAPID key as the bytes PushManager.subscribe wants. */
export function vapidKeyBytes(base64url: string): Uint8Array<ArrayBuffer> {
	const padded = (base64url + '='.repeat((4 - (base64url.length % 4)) % 4)).replace(/-/g, '+').replace(/_/g, '/');
	const raw = atob(padded);
	const bytes = new Uint8Array(new ArrayBuffer(raw.length));
	for (let i = 0; i < raw.length; i++) bytes[i] = raw.charCodeAt(i);
	return bytes;
}

/** A short name for this browser, so the device list tells phone from laptop. */
export function deviceLabel(userAgent: string): string {
	const os = /Android/.test(userAgent)
		? 'Android'
		: /iPhone|iPad/.test(userAgent)
			? 'iOS'
			: /Mac OS X/.test(userAgent)
				? 'macOS'
				: /Windows/.test(userAgent)
					? 'Windows'
					: /Linux/.test(userAgent)
						? 'Linux'
						: 'device';
	const browser = /Edg\//.test(userAgent)
		? 'Edge'
		: /Firefox\//.test(userAgent)
			? 'Firefox'
			: /Chrome\//.test(userAgent)
				? 'Chrome'
				: /Safari\//.test(userAgent)
					? 'Safari'
					: 'browser';
	return `${browser} on ${os}`;
}

/** Sends JSON to the API from the browser; resolves with the API's message when it refuses. */
export async function sendJson(path: string, method: 'POST' | 'PUT' | 'DELETE', body?: unknown): Promise<string | null> {
	const res = await fetch(path, {
		method,
		headers: body === undefined ? {} : { 'content-type': 'application/json' },
		body: body === undefined ? undefined : JSON.stringify(body)
	});
	if (res.ok) return null;
	const text = await res.text();
	try {
		return (JSON.parse(text) as { message?: string }).message ?? `${res.status}`;
	} catch {
		return text.slice(0, 200) || `the server answered ${res.status}`;
	}
}
