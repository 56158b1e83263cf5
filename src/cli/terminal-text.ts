/**
 * Text from the user's files and names made safe for a terminal: control characters (C0, DEL,
 * C1, which start escape sequences that can recolour, retitle or rewrite the screen) and the
 * Unicode bidirectional overrides (which reorder what is shown) are written as visible escapes,
 * so an error message is one line that shows exactly what the input held.
 */

// C0 controls, DEL, C1 controls, and the bidi embeddings, overrides and isolates
const UNSAFE = /[\u0000-\u001f\u007f-\u009f\u202a-\u202e\u2066-\u2069]/g;

/** `text` with every unsafe character replaced by `\xNN` (or `\uNNNN` above U+00FF). */
export function escapeForTerminal(text: string): string {
  return text.replace(UNSAFE, (c) => {
    const code = c.charCodeAt(0);
    return code <= 0xff ? `\\x${code.toString(16).padStart(2, '0')}` : `\\u${code.toString(16).padStart(4, '0')}`;
  });
}
