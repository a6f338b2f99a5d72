// Databases on the test PostgreSQL server (server mode of the suite): one seeded template, and a
// copy of it per test (CREATE DATABASE … TEMPLATE copies files, far faster than seeding again).
import pg from 'pg';

/** The URL of database `name` on the server that `adminUrl` points at. */
export function urlOf(adminUrl: string, name: string): string {
	const url = new URL(adminUrl);
	url.pathname = `/${name}`;
	return url.toString();
}

const safeName = (raw: string) =>
	raw
		.toLowerCase()
		.replace(/[^a-z0-9_]/g, '_')
		.slice(0, 60);

async function admin<T>(adminUrl: string, work: (client: pg.Client) => Promise<T>): Promise<T> {
	const client = new pg.Client({ connectionString: adminUrl });
	await client.connect();
	try {
		return await work(client);
	} finally {
		await client.end();
	}
}

export async function createDatabase(adminUrl: string, name: string): Promise<string> {
	const db = safeName(name);
	await admin(adminUrl, (c) => c.query(`CREATE DATABASE "${db}"`));
	return urlOf(adminUrl, db);
}

/** A copy of the template database (which must have no open connections). */
export async function cloneDatabase(templateUrl: string, name: string): Promise<string> {
	const adminUrl = urlOf(templateUrl, 'postgres');
	const template = new URL(templateUrl).pathname.slice(1);
	const db = safeName(name);
	await admin(adminUrl, (c) => c.query(`CREATE DATABASE "${db}" TEMPLATE "${template}"`));
	return urlOf(adminUrl, db);
}
