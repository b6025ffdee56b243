/**
 * Expected business outcomes travel as `Result<T, DomainError>` so that callers must handle them;
 * bugs and infrastructure failures throw.
 */
export class DomainError extends Error {
	/** HTTP status a route should answer with when this error reaches it. */
	readonly status: number
	constructor(message: string, status = 422) {
		super(message)
		this.name = new.target.name
		this.status = status
	}
}

export class NotFound extends DomainError {
	constructor(what: string) {
		super(`${what} was not found`, 404)
	}
}

export class Conflict extends DomainError {
	constructor(message: string) {
		super(message, 409)
	}
}

export class Forbidden extends DomainError {
	constructor(message: string) {
		super(message, 403)
	}
}

export type Ok<T> = { ok: true; value: T }
export type Err<E> = { ok: false; error: E }
export type Result<T, E = DomainError> = Ok<T> | Err<E>

export function ok<T>(value: T): Ok<T> {
	return { ok: true, value }
}

export function err<E>(error: E): Err<E> {
	return { ok: false, error }
}
