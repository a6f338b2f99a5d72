// The service worker: shows Phasewarden's web-push notifications and opens the right page when one
// is tapped. It caches nothing (the app is useless offline; a stale incident page would mislead).
/// <reference types="@sveltejs/kit" />
/// <reference no-default-lib="true"/>
/// <reference lib="esnext" />
/// <reference lib="webworker" />

const sw = self as unknown as ServiceWorkerGlobalScope;

/** What the server sends (src/lib/server/outbox/push-message.ts). */
type PushMessage = {
	title: string;
	body: string;
	url: string;
	tag: string;
	deliveryId: string;
	actions: { action: string; title: string; url: string }[];
};

sw.addEventListener('install', () => void sw.skipWaiting());
sw.addEventListener('activate', (event) => event.waitUntil(sw.clients.claim()));

sw.addEventListener('push', (event) => {
	let message: PushMessage;
	try {
		message = event.data?.json() as PushMessage;
	} catch {
		message = { title: 'Phasewarden', body: event.data?.text() ?? '', url: '/', tag: 'phasewarden', deliveryId: '', actions: [] };
	}
	// `actions` and `requireInteraction` are in the Notifications spec but not in every TS lib version.
	const options = {
		body: message.body,
		tag: message.tag,
		renotify: true,
		requireInteraction: message.actions.length > 0,
		data: message,
		actions: message.actions.map((a) => ({ action: a.action, title: a.title }))
	} as NotificationOptions;
	event.waitUntil(sw.registration.showNotification(message.title, options));
});

sw.addEventListener('notificationclick', (event) => {
	const message = event.notification.data as PushMessage;
	event.notification.close();
	// The Acknowledge action opens its own URL: the one-tap confirmation page for this delivery.
	const target = message.actions.find((a) => a.action === event.action)?.url ?? message.url;
	event.waitUntil(sw.clients.openWindow(target));
});
