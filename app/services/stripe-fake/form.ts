// Parsing of the form-encoded bodies (and query strings) the Stripe SDK sends: nested keys
// in brackets, `line_items[0][price_data][unit_amount]=2500`, `metadata[invoiceId]=7`,
// `expand[0]=customer` or `expand[]=customer`. Numeric keys make arrays; values stay strings
// (Stripe's API reads "true"/"false" and numbers from the text, as the fake does where it
// needs them).

export type FormValue = string | FormValue[] | { [key: string]: FormValue };
export type FormObject = { [key: string]: FormValue };

/** The path of a key: `a[b][0][c]` → ["a", "b", "0", "c"]; `a[]` → ["a", ""]. */
export function keyPath(key: string): string[] {
  const open = key.indexOf("[");
  if (open <= 0) return [key];
  const parts = [key.slice(0, open)];
  const rest = key.slice(open);
  const re = /\[([^\]]*)\]/g;
  let match: RegExpExecArray | null;
  let consumed = 0;
  while ((match = re.exec(rest)) !== null) {
    if (match.index !== consumed) break;
    parts.push(match[1]);
    consumed = match.index + match[0].length;
  }
  // Anything after the last well-formed bracket is kept as part of the last segment.
  if (consumed < rest.length) parts[parts.length - 1] += rest.slice(consumed);
  return parts;
}


/** Turns containers keyed only by indices into arrays, in index order. */
function arrays(value: FormValue): FormValue {
  if (typeof value === "string" || Array.isArray(value)) return value;
  const keys = Object.keys(value);
  const converted: { [key: string]: FormValue } = {};
  for (const k of keys) converted[k] = arrays(value[k]);
  if (keys.length > 0 && keys.every((k) => /^\d+$/.test(k))) {
    return keys.sort((a, b) => Number(a) - Number(b)).map((k) => converted[k]);
  }
  return converted;
}

/** Parses `application/x-www-form-urlencoded` text into nested objects and arrays. */
export function parseStripeForm(body: string): FormObject {
  const root: { [key: string]: FormValue } = {};
  const params = new URLSearchParams(body);
  for (const [rawKey, value] of params) {
    const path = keyPath(rawKey);
    let node: { [key: string]: FormValue } = root;
    for (let i = 0; i < path.length; i++) {
      let segment = path[i];
      const last = i === path.length - 1;
      if (segment === "" && i > 0) segment = String(Object.keys(node).length); // `a[]` appends
      if (last) {
        node[segment] = value;
      } else {
        const existing = node[segment];
        if (existing === undefined || typeof existing === "string" || Array.isArray(existing)) {
          node[segment] = {};
        }
        node = node[segment] as { [key: string]: FormValue };
      }
    }
  }
  return arrays(root) as FormObject;
}

/** A string field of a parsed form, or undefined. */
export function formString(form: FormObject | FormValue | undefined, key: string): string | undefined {
  if (!form || typeof form === "string" || Array.isArray(form)) return undefined;
  const value = form[key];
  return typeof value === "string" ? value : undefined;
}

/** A nested object field (e.g. metadata) as a record of strings. */
export function formRecord(form: FormObject | FormValue | undefined, key: string): Record<string, string> {
  if (!form || typeof form === "string" || Array.isArray(form)) return {};
  const value = form[key];
  if (!value || typeof value === "string" || Array.isArray(value)) return {};
  const out: Record<string, string> = {};
  for (const [k, v] of Object.entries(value)) if (typeof v === "string") out[k] = v;
  return out;
}
