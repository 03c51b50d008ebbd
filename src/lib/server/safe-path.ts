// Where to go after signing in comes from the address bar (?next=), which anyone can write: only
// a path of this app is followed, anything else goes to the overview. Browsers read "\" as "/"
// and drop tabs and newlines inside URLs, so "/\evil.example" and "/\t/evil.example" are
// protocol-relative links to another site; each such form is refused, decoded or not.
const OVERVIEW = '/';
const CONTROL_OR_BACKSLASH = /[\u0000-\u001f\u007f\\]/;
const BASE = 'http://same-origin.invalid';

export function sameOriginPath(value: string | null | undefined): string {
	if (!value || !value.startsWith('/') || value.startsWith('//')) return OVERVIEW;
	let decoded = value;
	try {
		// Twice: a link may carry "%255C", which one decoding step turns into "%5C".
		decoded = decodeURIComponent(decodeURIComponent(value));
	} catch {
		return OVERVIEW;
	}
	if (CONTROL_OR_BACKSLASH.test(value) || CONTROL_OR_BACKSLASH.test(decoded) || decoded.startsWith('//')) return OVERVIEW;
	const url = new URL(value, BASE);
	if (url.origin !== BASE) return OVERVIEW;
	return url.pathname + url.search + url.hash;
}
