// Whether a host name is this machine: the catchers run on the loopback, so the mailer and the push
// registration treat such a host as the development stand-in it is.
const LOOPBACK = /^(localhost|127(?:\.\d{1,3}){3}|::1|\[::1\])$/i;

export function isLoopbackHost(host: string): boolean {
	return LOOPBACK.test(host);
}
