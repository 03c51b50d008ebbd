import type { z } from 'zod';

/** The context key under which a new-record form lists the number fields to show empty. */
export const BLANK_FIELDS = 'shotwright:blank-fields';

/**
 * Number fields of a new-record form that have no sensible default: the form shows them empty
 * (not 0), so a person types each measurement instead of accepting a plausible-looking zero.
 */
export function blankNumberFields<S extends z.ZodObject>(schema: S, defaults: Partial<z.infer<S>> = {}): string[] {
	return Object.entries(schema.shape)
		.filter(([key, field]) => (field as { _zod?: { def?: { type?: string } } })._zod?.def?.type === 'number' && !(key in defaults))
		.map(([key]) => key);
}
