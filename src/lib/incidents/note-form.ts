// A note on an incident: the incident page's form (superforms, both sides) and POST /api/incidents/:id/notes.
import { z } from 'zod';
import { safeText } from '../protocol/safe-text';

export const MAX_NOTE_CHARS = 2000;

export const incidentNoteSchema = z.object({
	note: safeText(z.string().trim().min(1, 'note is required').max(MAX_NOTE_CHARS, `note is at most ${MAX_NOTE_CHARS} characters`))
});
