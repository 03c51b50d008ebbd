// The loads and named actions of a registry's pages (list, new, detail), shared by rigs,
// projectiles and test plans so each route file stays a thin adapter.
import { fail, redirect, type RequestEvent } from '@sveltejs/kit';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import type { z } from 'zod';
import type { Role } from '$lib/roles';
import { blankNumberFields } from '$lib/schemas/blank';
import { requireRole, requireUser } from './guards';
import { failWithRule, idParam } from './forms';
import { parseListParams, type ListParams, type Page } from './listing';

/** What the page adapters need of a registry (see registry.ts). */
type Registry<Row> = {
	sortKeys: string[];
	defaultSort: string;
	list(params: ListParams<string>): Promise<Page<Row>>;
	getOr404(id: number): Promise<Row>;
	create(input: never, userId: number): Promise<Row & { id: number }>;
	update(id: number, input: never, userId: number): Promise<Row>;
	remove(id: number, userId: number): Promise<Row>;
	restore(id: number, userId: number): Promise<Row>;
};

export function registryRoutes<Row, S extends z.ZodObject>(options: {
	registry: Registry<Row>;
	schema: S;
	/** Lowest role that may create, edit, delete and restore. */
	editRole: Role;
	/** Words for messages and the URL path, e.g. "rig" and "/rigs". */
	noun: string;
	path: string;
	defaults: Partial<z.infer<S>>;
}) {
	const { registry: r, schema, editRole, noun, path } = options;
	const adapter = zod4(schema);
	const id = (event: RequestEvent) => idParam(event.params.id, noun);

	return {
		listLoad: async (event: RequestEvent) => {
			await requireUser(event);
			const params = parseListParams(event.url, r.sortKeys, r.defaultSort);
			return { list: await r.list(params), deleted: params.deleted };
		},
		newLoad: async (event: RequestEvent) => {
			await requireRole(event, editRole);
			return {
				form: await superValidate(options.defaults as never, adapter, { errors: false }),
				blankFields: blankNumberFields(schema, options.defaults)
			};
		},
		create: async (event: RequestEvent) => {
			const user = await requireRole(event, editRole);
			const form = await superValidate(event.request, adapter);
			if (!form.valid) return fail(400, { form });
			let created: { id: number };
			try {
				created = await r.create(form.data as never, user.id);
			} catch (err) {
				return failWithRule(form, err);
			}
			redirect(303, `${path}/${created.id}?saved=1`);
		},
		detailLoad: async (event: RequestEvent) => {
			await requireUser(event);
			const row = await r.getOr404(id(event));
			return { row, form: await superValidate(row as never, adapter, { errors: false }), saved: event.url.searchParams.has('saved') };
		},
		update: async (event: RequestEvent) => {
			const user = await requireRole(event, editRole);
			const form = await superValidate(event.request, adapter);
			if (!form.valid) return fail(400, { form });
			try {
				await r.update(id(event), form.data as never, user.id);
			} catch (err) {
				return failWithRule(form, err);
			}
			return message(form, `${noun[0].toUpperCase()}${noun.slice(1)} saved.`);
		},
		remove: async (event: RequestEvent) => {
			const user = await requireRole(event, editRole);
			await r.remove(id(event), user.id);
			redirect(303, path);
		},
		restore: async (event: RequestEvent) => {
			const user = await requireRole(event, editRole);
			await r.restore(id(event), user.id);
			redirect(303, `${path}/${id(event)}`);
		}
	};
}
