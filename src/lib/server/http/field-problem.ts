// A refusal that names the field it is about: forms show `text` beside that field, and the JSON API
// answers the usual "field: text" message, so nothing has to parse the words back apart.
export class FieldProblem extends Error {
	constructor(
		readonly field: string,
		readonly text: string
	) {
		super(`${field}: ${text}`);
	}
}
