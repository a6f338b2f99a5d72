// Wires the delivery worker to its channels: SMTP (or the mail catcher), web push (or the push
// catcher), text messages (twilio, or its local fake) and webhooks. With PHASEWARDEN_CATCHER=1 the
// fakes stand in for every outside service, so development, demo and tests never reach one.
import { DEFAULT_BACKOFF } from '../../outbox/backoff';
import type { Config } from '../config';
import type { Db } from '../db';
import type { LiveBus } from '../live/bus';
import type { Mailer } from '../notify/mailer';
import { startPushCatcher } from '../push/catcher';
import { loadVapidKeys } from '../push/vapid';
import type { SmsClient } from '../sms/client';
import { smsConfigFromEnv } from '../sms/config';
import { startSmsFake } from '../sms/fake';
import { emailSender } from './send-email';
import { pushSender } from './send-push';
import { smsSender } from './send-sms';
import { webhookSender } from './send-webhook';
import { DeliveryWorker } from './worker';
import { singleInstance, type Cluster } from '../cluster/cluster';

export async function startDelivery({
	db,
	config,
	mailer,
	bus,
	cluster = singleInstance()
}: {
	db: Db;
	config: Config;
	mailer: Mailer | null;
	bus: LiveBus;
	cluster?: Cluster;
}) {
	const origin = config.origin ?? 'http://localhost:5173';
	const vapid = loadVapidKeys(config.dataDir);
	const pushCatcher = config.catcher ? await startPushCatcher() : null;
	const smsFake = config.catcher ? await startSmsFake() : null;
	const smsConfig = smsFake
		? { accountSid: smsFake.accountSid, authToken: smsFake.authToken, from: smsFake.from, baseUrl: smsFake.baseUrl }
		: smsConfigFromEnv();
	const sms: SmsClient | null = smsConfig ? (await import('../sms/client')).createSmsClient(smsConfig) : null;
	if (pushCatcher) console.log(`push catcher listening on 127.0.0.1:${pushCatcher.port}`);
	if (smsFake) console.log(`SMS fake listening on 127.0.0.1:${smsFake.port}`);

	const worker = new DeliveryWorker(
		db,
		{
			...(mailer ? { email: emailSender(db, mailer, origin) } : {}),
			push: pushSender(db, vapid, origin),
			...(sms ? { sms: smsSender(db, sms, origin) } : {}),
			webhook: webhookSender(db, origin)
		},
		{ poll_ms: config.outboxPollMs, backoff: { ...DEFAULT_BACKOFF, base_ms: config.outboxRetryBaseMs } }
	);
	// An incident event follows the commit that queued its notices: deliver them now, not at the next tick.
	const unsubscribe = bus.subscribe((e) => {
		if (e.type === 'incident') void worker.wake();
	});
	// With another instance connected, a row left `sending` may be its send under way: it waits for its lease.
	await worker.start(await cluster.alone());
	return {
		worker,
		vapid,
		pushCatcher,
		smsFake,
		sms,
		async close() {
			unsubscribe();
			await worker.stop();
			await pushCatcher?.close();
			await smsFake?.close();
		}
	};
}

export type Delivery = Awaited<ReturnType<typeof startDelivery>>;
