// Keeping input strings as text in a generated HTML page: escaping for HTML text and attributes,
// JSON that is safe inside a <script> element, and inline scripts that cannot end their element early.
// The rules follow the HTML Living Standard (WHATWG), "Restrictions for contents of script elements".

const HTML_ESCAPES: Record<string, string> = {
  '&': '&amp;',
  '<': '&lt;',
  '>': '&gt;',
  '"': '&quot;',
  "'": '&#39;',
};

/** Escape a string for HTML text or a quoted attribute value. */
export function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => HTML_ESCAPES[c] as string);
}

/**
 * JSON for a `<script type="application/json">` element: `<`, `>`, `&` and the line separators
 * U+2028/U+2029 become `\u003c` etc., so no input string can close the element, open a comment
 * or start a new script, and the text parses back with `JSON.parse` to the same value.
 */
export function jsonForScript(value: unknown): string {
  const json = JSON.stringify(value);
  if (json === undefined) throw new Error('jsonForScript: the value has no JSON form');
  return json.replace(/[<>&\u2028\u2029]/g, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`);
}

/**
 * Make a script's source safe to inline in `<script>...</script>`: the HTML parser ends the element at
 * the first `</script` and enters its escaped states at `<!--` / `<script`. Replacing `</script` with
 * `<\/script` and `<!--` with `\x3C!--` keeps the same meaning inside JS strings, template literals,
 * regular expressions (also with the `u` flag) and comments, where these sequences can legally occur.
 * Plain code outside those contexts cannot contain them.
 */
export function inlineScriptSource(source: string): string {
  return source.replace(/<\/(script)/gi, '<\\/$1').replace(/<!--/g, '\\x3C!--');
}
