/**
 * Text from the store, files or the command line made safe to print on a
 * terminal. A name is data, and data must not drive the terminal: an ESC
 * starts a control sequence (colours, cursor moves, OSC 8 links, a window
 * title), a CR or LF forges a line of output, and the Unicode direction
 * overrides reorder what is shown (the "Trojan Source" trick, CVE-2021-42574).
 * Each such character is shown as a visible escape instead (`\x1b`, `\n`,
 * `\u202e`), so nothing is lost and nothing is interpreted. JSON and CSV
 * output stay exact; this is for human-readable output only.
 */

// C0 controls (tab included: it breaks table columns), DEL, C1 controls (0x9b is a one-byte CSI),
// line and paragraph separators, and the bidirectional embedding, override and isolate marks
const UNSAFE = /[\u0000-\u001f\u007f-\u009f\u2028\u2029\u202a-\u202e\u2066-\u2069]/g;

const NAMED: Record<string, string> = { '\n': '\\n', '\r': '\\r', '\t': '\\t' };

/** `s` with every terminal control character shown as an escape; a string without them comes back unchanged. */
export function safeText(s: string): string {
  UNSAFE.lastIndex = 0;
  if (!UNSAFE.test(s)) return s;
  return s.replace(UNSAFE, (c) => {
    const named = NAMED[c];
    if (named) return named;
    const code = c.charCodeAt(0);
    return code <= 0xff ? `\\x${code.toString(16).padStart(2, '0')}` : `\\u${code.toString(16).padStart(4, '0')}`;
  });
}

