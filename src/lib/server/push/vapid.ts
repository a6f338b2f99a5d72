// The server's VAPID identity for web push: taken from the environment, or generated on first
// start and kept in the data folder (vapid.json, readable by the owner only) so that devices
// subscribed once stay subscribed across restarts.
import { chmodSync, existsSync, readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import webpush from 'web-push';

export type VapidKeys = { publicKey: string; privateKey: string; subject: string };

const DEFAULT_SUBJECT = 'mailto:phasewarden@localhost';

export function loadVapidKeys(dataDir: string, env: NodeJS.ProcessEnv = process.env): VapidKeys {
	const subject = env.PHASEWARDEN_VAPID_SUBJECT || DEFAULT_SUBJECT;
	if (!/^(mailto:|https:\/\/)/.test(subject)) {
		throw new Error(`PHASEWARDEN_VAPID_SUBJECT must start with mailto: or https://, got "${subject}"`);
	}
	const fromEnv = env.PHASEWARDEN_VAPID_PUBLIC || env.PHASEWARDEN_VAPID_PRIVATE;
	if (fromEnv) {
		if (!env.PHASEWARDEN_VAPID_PUBLIC || !env.PHASEWARDEN_VAPID_PRIVATE) {
			throw new Error('set both PHASEWARDEN_VAPID_PUBLIC and PHASEWARDEN_VAPID_PRIVATE, or neither');
		}
		return { publicKey: env.PHASEWARDEN_VAPID_PUBLIC, privateKey: env.PHASEWARDEN_VAPID_PRIVATE, subject };
	}
	const file = path.join(dataDir, 'vapid.json');
	if (existsSync(file)) {
		const stored = JSON.parse(readFileSync(file, 'utf8')) as Partial<VapidKeys>;
		if (!stored.publicKey || !stored.privateKey) throw new Error(`${file}: publicKey or privateKey is missing`);
		return {
			publicKey: stored.publicKey,
			privateKey: stored.privateKey,
			subject: env.PHASEWARDEN_VAPID_SUBJECT || stored.subject || subject
		};
	}
	const keys = webpush.generateVAPIDKeys();
	const created = { ...keys, subject };
	writeFileSync(file, JSON.stringify(created, null, 2) + '\n', { mode: 0o600 });
	chmodSync(file, 0o600);
	return created;
}
