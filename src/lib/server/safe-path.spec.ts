import { describe, expect, it } from 'vitest';
import { sameOriginPath } from './safe-path';

// The forms browsers read as another site: WHATWG URL Standard, "special" schemes treat "\" as "/"
// and strip ASCII tab and newline anywhere in the input.
describe('sameOriginPath', () => {
	it.each([
		['/sessions?status=open', '/sessions?status=open'],
		['/rigs/3#notes', '/rigs/3#notes'],
		['/', '/']
	])('keeps the app path %s', (input, expected) => {
		expect(sameOriginPath(input)).toBe(expected);
	});

	it.each([null, '', 'sessions', '//evil.example', '/\\evil.example', '/%5Cevil.example', '/%5cevil.example', '/%255Cevil.example', '/%2F/evil.example', '/%2f%2fevil.example', '/\t/evil.example', '/%09/evil.example', '/\n/evil.example', 'https://evil.example', '/%E0%A4%A'])(
		'sends %j to the overview',
		(input) => {
			expect(sameOriginPath(input)).toBe('/');
		}
	);
});
