// The text-message account from the environment, apart from the client so that reading the settings
// does not load the twilio SDK (a server without texts never loads it).
export type SmsConfig = { accountSid: string; authToken: string; from: string; baseUrl?: string };

export function smsConfigFromEnv(env: NodeJS.ProcessEnv = process.env): Omit<SmsConfig, 'baseUrl'> | null {
	const { TWILIO_ACCOUNT_SID: accountSid, TWILIO_AUTH_TOKEN: authToken, TWILIO_FROM: from } = env;
	if (!accountSid && !authToken && !from) return null;
	if (!accountSid || !authToken || !from) throw new Error('set all of TWILIO_ACCOUNT_SID, TWILIO_AUTH_TOKEN and TWILIO_FROM, or none');
	if (!/^AC\w{32}$/.test(accountSid)) throw new Error('TWILIO_ACCOUNT_SID must be "AC" followed by 32 letters or digits');
	return { accountSid, authToken, from };
}
