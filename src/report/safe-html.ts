/**
 * HTML built from template literals in which every interpolated value is escaped unless
 * it is already markup made by this module. Scenario names, class reasons, warnings and
 * file names all come from files a user may have edited, so nothing reaches the page
 * unescaped by accident: a raw string can only enter through `html`, which escapes it.
 */

/** A piece of markup known to be safe (built by `html` or `rawHtml`). */
export class SafeHtml {
  constructor(readonly text: string) {}
  toString(): string {
    return this.text;
  }
}

/**
 * Escape a string for HTML text and for double- or single-quoted attribute values:
 * & < > " ' become character references. Returns the escaped string.
 */
export function escapeHtml(s: string): string {
  return s.replace(/[&<>"']/g, (c) => {
    switch (c) {
      case '&':
        return '&amp;';
      case '<':
        return '&lt;';
      case '>':
        return '&gt;';
      case '"':
        return '&quot;';
      default:
        return '&#39;';
    }
  });
}

/** Anything `html` accepts in a `${...}` slot. Arrays are joined; null/undefined/false give nothing. */
export type HtmlValue = SafeHtml | string | number | boolean | null | undefined | HtmlValue[];

function render(v: HtmlValue): string {
  if (v === null || v === undefined || v === false) return '';
  if (v instanceof SafeHtml) return v.text;
  if (Array.isArray(v)) return v.map(render).join('');
  return escapeHtml(String(v));
}

/**
 * Tagged template: `html\`<td>${name}</td>\`` returns SafeHtml with `name` escaped.
 * SafeHtml values are inserted as they are; arrays are concatenated.
 */
export function html(strings: TemplateStringsArray, ...values: HtmlValue[]): SafeHtml {
  let out = strings[0];
  for (let i = 0; i < values.length; i++) out += render(values[i]) + strings[i + 1];
  return new SafeHtml(out);
}

/**
 * Mark a string as markup without escaping. Only for text this program wrote itself
 * (the inlined plotting bundle, the style sheet); never for anything read from a file.
 */
export function rawHtml(s: string): SafeHtml {
  return new SafeHtml(s);
}

/**
 * JSON for a `<script type="application/json">` block: `<`, `>`, `&` and the line
 * separators U+2028/2029 written as \u escapes, so no value can close the block
 * (`</script>`) or open a comment; JSON.parse of the block's text gives the value back.
 */
export function jsonForScript(value: unknown): string {
  return JSON.stringify(value).replace(
    /[<>&\u2028\u2029]/g,
    (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`,
  );
}

/**
 * Text for plotly labels (trace names, axis titles): plotly reads a small set of tags
 * and character references in its labels, so a label is entity-escaped and shows as
 * written instead of being interpreted.
 */
export function plotText(s: string): string {
  return escapeHtml(s);
}
