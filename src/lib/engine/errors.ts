/**
 * The one error the engine throws on purpose: the input cannot be placed as given.
 * The message is written for the person who supplied the input (analyst or CLI user).
 */
export class EngineInputError extends Error {
	/** Which input was wrong, e.g. "grid.mass", "sensors[3].radius", "options.strategy". */
	readonly field: string;

	constructor(field: string, message: string) {
		super(`${field}: ${message}`);
		this.name = 'EngineInputError';
		this.field = field;
	}
}
