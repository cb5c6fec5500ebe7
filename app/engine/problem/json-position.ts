/**
 * Locates the first syntax error of a JSON text (line and column, 1-based), because
 * JSON.parse's messages do not always carry a position. A small scanner over the JSON grammar
 * (RFC 8259); nesting deeper than MAX_JSON_NESTING and duplicate field names in one object
 * (which JSON.parse would silently resolve to the last one) are reported as errors too.
 */
export const MAX_JSON_NESTING = 256;

export interface JsonSyntaxError {
  line: number;
  column: number;
  message: string;
}

export function lineColumn(text: string, pos: number): { line: number; column: number } {
  let line = 1;
  let col = 1;
  for (let i = 0; i < pos && i < text.length; i++) {
    if (text[i] === "\n") {
      line++;
      col = 1;
    } else col++;
  }
  return { line, column: col };
}

/** Returns null when the text is valid JSON (within the nesting limit, no duplicate fields). */
export function findJsonError(text: string): JsonSyntaxError | null {
  let i = 0;
  const n = text.length;
  const fail = (message: string): never => {
    throw Object.assign(new Error(message), { pos: i });
  };
  const ws = () => {
    while (i < n && (text[i] === " " || text[i] === "\t" || text[i] === "\n" || text[i] === "\r")) i++;
  };
  const describe = () => (i >= n ? "end of file" : `'${text[i]}'`);
  const str = () => {
    i++; // opening quote
    while (i < n) {
      const c = text[i];
      if (c === '"') {
        i++;
        return;
      }
      if (c === "\\") {
        const e = text[i + 1];
        if (e === "u") {
          if (!/^[0-9a-fA-F]{4}$/.test(text.slice(i + 2, i + 6))) fail("bad \\u escape in string");
          i += 6;
        } else if (e !== undefined && '"\\/bfnrt'.includes(e)) i += 2;
        else fail("bad escape in string");
      } else if (c.charCodeAt(0) < 0x20) fail("line break or control character inside a string");
      else i++;
    }
    fail("unterminated string");
  };
  const num = () => {
    const m = /^-?(0|[1-9]\d*)(\.\d+)?([eE][+-]?\d+)?/.exec(text.slice(i, i + 400));
    if (!m || m[0] === "" || m[0] === "-") fail(`unexpected ${describe()}`);
    i += m![0].length;
  };
  const value = (depth: number): void => {
    if (depth > MAX_JSON_NESTING) fail(`nested more than ${MAX_JSON_NESTING} levels deep`);
    ws();
    const c = text[i];
    if (c === "{") {
      i++;
      ws();
      if (text[i] === "}") {
        i++;
        return;
      }
      const keys = new Set<string>();
      for (;;) {
        ws();
        if (text[i] !== '"') fail(`expected a double-quoted field name, found ${describe()}`);
        const keyStart = i;
        str();
        const key = JSON.parse(text.slice(keyStart, i)) as string;
        if (keys.has(key)) {
          i = keyStart;
          fail(`duplicate field '${key.slice(0, 40)}'`);
        }
        keys.add(key);
        ws();
        if (text[i] !== ":") fail(`expected ':' after the field name, found ${describe()}`);
        i++;
        value(depth + 1);
        ws();
        if (text[i] === ",") {
          i++;
          ws();
          if (text[i] === "}") fail("trailing comma before '}'");
          continue;
        }
        if (text[i] === "}") {
          i++;
          return;
        }
        fail(`expected ',' or '}', found ${describe()}`);
      }
    } else if (c === "[") {
      i++;
      ws();
      if (text[i] === "]") {
        i++;
        return;
      }
      for (;;) {
        value(depth + 1);
        ws();
        if (text[i] === ",") {
          i++;
          ws();
          if (text[i] === "]") fail("trailing comma before ']'");
          continue;
        }
        if (text[i] === "]") {
          i++;
          return;
        }
        fail(`expected ',' or ']', found ${describe()}`);
      }
    } else if (c === '"') str();
    else if (c === "-" || (c >= "0" && c <= "9")) num();
    else if (text.startsWith("true", i)) i += 4;
    else if (text.startsWith("false", i)) i += 5;
    else if (text.startsWith("null", i)) i += 4;
    else if (c === "/" && (text[i + 1] === "/" || text[i + 1] === "*")) fail("comments are not allowed in JSON");
    else fail(`unexpected ${describe()}`);
  };
  try {
    if (text.charCodeAt(0) === 0xfeff) i = 1;
    value(0);
    ws();
    if (i < n) fail(`unexpected ${describe()} after the end of the document`);
    return null;
  } catch (err) {
    const pos = (err as { pos?: number }).pos ?? i;
    const { line, column } = lineColumn(text, pos);
    return { line, column, message: err instanceof RangeError ? "nested too deeply" : (err as Error).message };
  }
}
