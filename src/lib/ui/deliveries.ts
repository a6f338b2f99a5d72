// How the delivery log shows an outbox row: its state as a badge, its recipient in words.
import type { StatusLook } from './status';

export type DeliveryRow = {
	id: string;
	incidentId: string | null;
	kind: string;
	channel: 'email' | 'push' | 'sms' | 'webhook';
	recipient: string;
	recipientName: string | null;
	payload: Record<string, unknown>;
	status: 'pending' | 'sending' | 'sent' | 'failed' | 'expired';
	attempts: number;
	nextAttemptAt: string | Date;
	expiresAt: string | Date;
	lastError: string | null;
	sentAt: string | Date | null;
	createdAt: string | Date;
	attemptLog: { id: number; startedAt: string | Date; durationMs: number; outcome: string; error: string | null }[];
};

export const DELIVERY_LOOK: Record<DeliveryRow['status'], StatusLook> = {
	pending: { word: 'Waiting', shape: 'ring', tone: 'caution', hint: 'Queued, or waiting for its next try' },
	sending: { word: 'Sending', shape: 'ring', tone: 'steady', hint: 'A send is in progress' },
	sent: { word: 'Sent', shape: 'dot', tone: 'steady', hint: 'The far side accepted it' },
	failed: { word: 'Failed', shape: 'triangle', tone: 'alarm', hint: 'Refused for good; retry after fixing the cause' },
	expired: { word: 'Expired', shape: 'square', tone: 'muted', hint: 'Not delivered before it expired' }
};

export function recipientWords(d: DeliveryRow): string {
	const who = d.recipientName ?? '';
	if (d.channel === 'email') return `${who || d.recipient}${typeof d.payload.address === 'string' ? ` <${d.payload.address}>` : ''}`;
	if (d.channel === 'push') return `${who ? `${who}'s` : 'a'} device`;
	if (d.channel === 'sms') return `${who || d.recipient} (text)`;
	return `webhook ${d.recipient.slice(0, 8)}`;
}
