/**
 * Escaping for the HTML pages. Every string that came from a user (scenario name, file
 * names, policy names, cell labels, command lines) passes through `escapeHtml` before it
 * enters markup; data handed to the replay viewer goes in a JSON script block through
 * `jsonForScript`, which escapes `<`, `>`, `&` and the two JavaScript line separators so
 * that no `</script>` or comment opener can end the block (OWASP XSS Prevention Cheat
 * Sheet, rule 3.1: HTML-escape JSON values in an HTML context, read them with JSON.parse).
 */
const entities: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' };

export function escapeHtml(text: unknown): string {
  return String(text).replace(/[&<>"']/g, (c) => entities[c]);
}

export function jsonForScript(value: unknown): string {
  return JSON.stringify(value)
    .replace(/</g, '\\u003c')
    .replace(/>/g, '\\u003e')
    .replace(/&/g, '\\u0026')
    .replace(/\u2028/g, '\\u2028')
    .replace(/\u2029/g, '\\u2029');
}
