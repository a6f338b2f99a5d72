// npm run demo: a fresh demo lab on the embedded database, the production server with the mail
// catcher, and a simulated agent whose run loses lock within the first two minutes.
import { spawn, type ChildProcess } from 'node:child_process';
import { SERVER_NODE_FLAGS } from './server-flags.js';
import path from 'node:path';
import { eq } from 'drizzle-orm';
import { addUser } from '../lib/server/auth/users';
import { createAuth } from '../lib/server/auth/options';
import { loadAuthSecret } from '../lib/server/auth/secret';
import { dataDirHolder, lockDataDir, unlockDataDir } from '../lib/server/data-lock';
import { DEMO_DATA_ENV, prepareDemoFolder } from '../lib/server/demo/data-folder';
import { DEMO_CRITICAL_ACK_MIN, seedDemoOnCall } from '../lib/server/demo/on-call';
import { openDatabase } from '../lib/server/db';
import { user } from '../lib/server/db/schema';
import { saveRateModel } from '../lib/server/models/rate-models';
import { addMember, createSetup } from '../lib/server/setups/service';
import { createAgentToken } from '../lib/server/setups/tokens';
import { DEMO_PASSWORD, demoOnCall, demoPeople, demoSetups } from './demo-lab';

const root = path.resolve(import.meta.dirname, '../..');
// Never PHASEWARDEN_DATA: someone who exported it for production must not have it cleared by a demo.
const dataDir = path.resolve(process.env[DEMO_DATA_ENV] || path.join(root, '.data/demo'));
const port = Number(process.env.PORT ?? 3000);
const origin = process.env.ORIGIN ?? `http://localhost:${port}`;
// Simulated seconds per real second (tests run the demo faster; a person watching it wants 1).
const speed = process.env.PHASEWARDEN_DEMO_SPEED ?? '1';

async function seed(): Promise<string> {
	lockDataDir(dataDir);
	const { db, close } = await openDatabase(dataDir, path.join(root, 'drizzle'));
	try {
		const auth = createAuth({ db, secret: loadAuthSecret(dataDir, process.env.BETTER_AUTH_SECRET), baseURL: origin });
		for (const person of demoPeople) await addUser(auth, { ...person, password: DEMO_PASSWORD });
		const ids = new Map((await db.select({ id: user.id, email: user.email }).from(user)).map((u) => [u.email, u.id]));
		const [admin] = await db.select().from(user).where(eq(user.email, demoPeople[0].email));
		let secret = '';
		for (const s of demoSetups) {
			const setup = await createSetup(db, { ...s }, admin.id);
			for (const email of s.members) await addMember(db, setup.id, ids.get(email)!);
			if (!secret) {
				secret = (await createAgentToken(db, setup.id, 'demo instrument PC', admin.id)).secret;
				// The simulated oscillator switches 0.05 times a second while locked: W0·e^{−A} at base temperature.
				const model = {
					process: 'switching' as const,
					W0_per_s: 0.05 * Math.exp(3),
					A: 3,
					W0_sigma: 0.1,
					A_sigma: 0.1,
					mode_GHz: 5,
					nominal_mK: 12,
					source: 'manual' as const
				};
				await saveRateModel(db, setup.id, model, admin.id, 'demo: from an earlier cooldown of this line');
				// Exactly one person is woken by the lock loss; the next in the rota if they sleep on.
				const people = demoOnCall.map((p) => ({ id: ids.get(p.email)!, phone: p.phone }));
				await seedDemoOnCall(db, setup.id, people, admin.id);
			}
		}
		return secret;
	} finally {
		await close();
		unlockDataDir(dataDir);
	}
}

async function waitForServer(url: string, child: ChildProcess) {
	for (let i = 0; i < 150; i++) {
		if (child.exitCode !== null) throw new Error('the server exited during start-up');
		try {
			await fetch(url);
			return;
		} catch {
			await new Promise((r) => setTimeout(r, 200));
		}
	}
	throw new Error(`the server did not answer at ${url}`);
}

if (process.env.PHASEWARDEN_DATA) {
	console.log(
		`note: PHASEWARDEN_DATA (${process.env.PHASEWARDEN_DATA}) is ignored by the demo; it uses ${dataDir} (set ${DEMO_DATA_ENV} to change it).`
	);
}
// The demo always starts from a clean lab, and clears only a folder it made itself.
const holder = dataDirHolder(dataDir);
if (holder) {
	console.error(`demo: ${dataDir} is in use by process ${holder} (another demo or server); stop it first.`);
	process.exit(1);
}
try {
	prepareDemoFolder(dataDir);
} catch (err) {
	console.error(`demo: ${(err as Error).message}`);
	process.exit(1);
}
const token = await seed();
const env = { ...process.env, PHASEWARDEN_DATA: dataDir, PHASEWARDEN_CATCHER: '1', PORT: String(port), ORIGIN: origin };
const server = spawn(process.execPath, [...SERVER_NODE_FLAGS, path.join(root, 'src/bin/serve.js')], { env, stdio: 'inherit' });
await waitForServer(`http://127.0.0.1:${port}/api/health`, server);

/**
 * Each person on the rota gets a simulated phone on the push catcher, as if they had subscribed
 * from their settings page: the catcher lives in the server process, so this happens over HTTP.
 */
async function subscribeDemoDevices() {
	const base = `http://127.0.0.1:${port}`;
	for (const { email } of demoOnCall) {
		const signIn = await fetch(`${base}/api/auth/sign-in/email`, {
			method: 'POST',
			headers: { 'content-type': 'application/json', origin },
			body: JSON.stringify({ email, password: DEMO_PASSWORD })
		});
		if (!signIn.ok) throw new Error(`demo: sign-in as ${email} failed (${signIn.status})`);
		const cookie = signIn.headers
			.getSetCookie()
			.map((c) => c.split(';')[0])
			.join('; ');
		const device = await fetch(`${base}/api/dev/push/devices`, { method: 'POST', headers: { origin, cookie } });
		if (!device.ok) throw new Error(`demo: could not add a push device for ${email} (${device.status} ${await device.text()})`);
	}
}
await subscribeDemoDevices();

const tsx = path.join(root, 'node_modules/.bin/tsx');
const agent = spawn(
	tsx,
	[
		path.join(root, 'agent/cli.ts'),
		'--simulate',
		'--url',
		`ws://127.0.0.1:${port}/api/agent/stream`,
		'--token',
		token,
		'--run-key',
		'bramble-t6-overnight',
		'--run-name',
		'T6 overnight, pump 15.02 GHz',
		'--lose-lock-at-min',
		'1',
		'--lock-loss-min',
		'1.5',
		// IQ histograms so the run page's phase-space picture shows the state lobes.
		'--iq-bins',
		'24',
		'--spool',
		path.join(dataDir, 'agent-spool.ndjson'),
		'--seed',
		'7',
		'--speed',
		speed
	],
	{ env: process.env, stdio: ['ignore', 'inherit', 'inherit'] }
);

console.log(`
Phasewarden demo — the Aldermoor low-temperature lab
  open            ${origin}
  sign in as      ${demoPeople.map((p) => `${p.email} (${p.role})`).join('\n                  ')}
  password        ${DEMO_PASSWORD}
  caught messages ${origin}/dev/inbox (e-mail, push, texts; signed in as an operator or admin)
  data            ${dataDir}
  on call         ${demoOnCall[0].name} (push, text ${demoOnCall[0].phone}, e-mail); ${demoOnCall[1].name} after ${DEMO_CRITICAL_ACK_MIN} min without an acknowledgement
A simulated agent streams run "T6 overnight" on Fridge Bramble; it loses lock after one minute.
Ctrl-C stops everything.
`);

function stop() {
	agent.kill('SIGTERM');
	server.kill('SIGTERM');
}
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
server.on('exit', (code) => {
	agent.kill('SIGTERM');
	process.exit(code ?? 0);
});
