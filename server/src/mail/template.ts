/**
 * Plain-text e-mail built from our own wording with user-supplied values dropped in. Every value passes
 * `clean`: control characters (C0, DEL, C1 and the Unicode line/paragraph separators) become one space,
 * so a report path or profile name cannot add lines ("sign in at …") or headers to a message, and a
 * value is cut to a length a reader can take in. (OWASP ASVS 4.0 V5.2.3: e-mail output from user input.)
 */

// C0 controls, DEL, C1 controls, U+2028 LINE SEPARATOR, U+2029 PARAGRAPH SEPARATOR.
// eslint-disable-next-line no-control-regex -- matching control characters is the point
const CONTROL = /[\u0000-\u001f\u007f-\u009f\u2028\u2029]+/g;

export function clean(value: unknown, maxLength = 300): string {
  const text = String(value ?? "").replace(CONTROL, " ");
  return text.length > maxLength ? `${text.slice(0, maxLength - 1)}…` : text;
}

/** A tagged template: `mailLine\`Batch ${id} of "${name}"\`` — the literal text is ours, every value is cleaned. */
export function mailLine(strings: TemplateStringsArray, ...values: unknown[]): string {
  return strings.reduce((out, s, i) => out + s + (i < values.length ? clean(values[i]) : ""), "");
}
