// Helpers shared by the form actions of the registries.
import { error } from '@sveltejs/kit';
import { fail } from '@sveltejs/kit';
import { setError, type SuperValidated } from 'sveltekit-superforms';
import { DuplicateNameError } from './registry';
import { SessionRuleError } from './sessions';

/** A numeric route parameter, or 404. */
export function idParam(value: string | undefined, what: string): number {
	const id = Number(value);
	if (!Number.isInteger(id) || id < 1) error(404, { message: `No ${what} with id "${value}".` });
	return id;
}

/** Turn a domain rule broken by the input into a field error on the form (status 400/403/409). */
export function failWithRule<T extends Record<string, unknown>>(form: SuperValidated<T>, err: unknown) {
	if (err instanceof DuplicateNameError) return setError(form, 'name' as never, err.message);
	if (err instanceof SessionRuleError) {
		const field = err.field in form.data ? err.field : '';
		return setError(form, field as never, err.message, { status: err.status === 404 ? 400 : (err.status as 400) });
	}
	throw err;
}

export { fail };
