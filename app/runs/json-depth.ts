/**
 * Nesting depth of a JSON text, measured before JSON.parse: a 50,000-deep array parses, but every
 * recursive walk after it (validation, copying into JSON columns) would exhaust the stack. One pass
 * over the characters, skipping string contents; stops at the first position deeper than `limit`.
 */
export function jsonTooDeep(text: string, limit: number): { depth: number; position: number } | null {
  let depth = 0;
  let inString = false;
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (inString) {
      if (c === 92 /* \ */) i++;
      else if (c === 34 /* " */) inString = false;
      continue;
    }
    if (c === 34) inString = true;
    else if (c === 91 /* [ */ || c === 123 /* { */) {
      if (++depth > limit) return { depth, position: i };
    } else if (c === 93 /* ] */ || c === 125 /* } */) depth--;
  }
  return null;
}
