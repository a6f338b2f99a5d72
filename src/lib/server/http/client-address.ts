// Which address a request comes from. The socket's peer is the only thing a client cannot forge, so it
// is the answer unless that peer is a reverse proxy the operator named (PHASEWARDEN_TRUSTED_PROXY):
// then X-Forwarded-For is read from the right, skipping the trusted proxies, as each hop appends the
// address it saw. adapter-node's ADDRESS_HEADER trusts the header from any peer, so we do not use it.

/** '::ffff:10.0.0.1' and '10.0.0.1' are the same IPv4 peer; compare them alike. */
export function normalizeAddress(address: string): string {
	const a = address.trim().toLowerCase();
	return a.startsWith('::ffff:') && a.includes('.') ? a.slice(7) : a;
}

export function clientAddress(socketAddress: string, forwardedFor: string | null, trustedProxies: readonly string[]): string {
	const trusted = new Set(trustedProxies.map(normalizeAddress));
	const peer = normalizeAddress(socketAddress);
	if (!trusted.has(peer) || !forwardedFor) return peer;
	const hops = forwardedFor.split(',').map(normalizeAddress).filter(Boolean);
	for (let i = hops.length - 1; i >= 0; i--) if (!trusted.has(hops[i])) return hops[i];
	return hops[0] ?? peer;
}
