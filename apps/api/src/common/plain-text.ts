/**
 * Control characters other than tab and line breaks. PostgreSQL refuses NUL in
 * text and in JSON (every audit entry is JSON), and the others have no place in
 * a name or a note.
 */
export const CONTROL_CHARACTERS = /[\u0000-\u0008\u000B\u000C\u000E-\u001F\u007F]/;

/** Half of a surrogate pair on its own: not Unicode text, and refused by PostgreSQL's JSON (written "\ud800"). */
const UNPAIRED_SURROGATE = /[\ud800-\udbff](?![\udc00-\udfff])|(?<![\ud800-\udbff])[\udc00-\udfff]/;

/** Text every stored member may hold: `.refine(isPlainText, plainTextOnly)` gives a 400 before the database would fail. */
export const isPlainText = (s: string): boolean => !CONTROL_CHARACTERS.test(s) && !UNPAIRED_SURROGATE.test(s);

export const plainTextOnly = { error: 'must not contain control characters or unpaired surrogates' };

export const noControl = { error: 'must not contain control characters' };

/** Characters as PostgreSQL's char_length counts them (code points: "𐀀" is one, though two UTF-16 units). */
export const characterCount = (s: string): number => [...s].length;
