/**
 * The JSON form of an EOS answer: the workers' JSON bytes of every column written as they are,
 * between small structural texts (no joining into one large string, no re-encoding).
 */
import type { Response } from 'express';
import type { BatchAnswer } from './service.js';
import type { JsonParts } from './tasks.js';

/** Answers up to this size are written as one buffer; larger ones piece by piece. */
const ONE_BUFFER_BYTES = 256 * 1024;

/** Writes the pieces of a JSON answer (renderJson) with their total Content-Length. */
export function sendJson(res: Response, pieces: Buffer[]) {
  let length = 0;
  for (const p of pieces) length += p.length;
  res.status(200).type('application/json').setHeader('Content-Length', length);
  if (length <= ONE_BUFFER_BYTES) {
    res.end(Buffer.concat(pieces, length));
    return;
  }
  // corked: the pieces leave in large writes (end() flushes them); never copied into one buffer
  res.cork();
  for (const p of pieces) res.write(p);
  res.end();
}

/** Builds a JSON text from small strings and byte pieces that are referenced, never copied. */
class JsonPieces {
  readonly pieces: Buffer[] = [];
  private text = '';

  add(text: string) {
    this.text += text;
  }

  /** The JSON parts of a column, joined with commas. */
  addParts(parts: Uint8Array[]) {
    parts.forEach((part, i) => {
      if (i > 0) this.text += ',';
      const bytes = Buffer.from(part.buffer, part.byteOffset, part.byteLength);
      // small parts (single points) join the text: one buffer for the whole answer
      if (bytes.length <= 256) this.text += bytes.toString('utf8');
      else {
        this.flushText();
        this.pieces.push(bytes);
      }
    });
  }

  done(): Buffer[] {
    this.flushText();
    return this.pieces;
  }

  private flushText() {
    if (this.text.length === 0) return;
    this.pieces.push(Buffer.from(this.text, 'utf8'));
    this.text = '';
  }
}

/**
 * The JSON answer as pieces to write in order: the workers' JSON bytes of every column, referenced
 * as they are (no joining into one large string, no re-encoding: for a 1e5-point batch that was
 * most of the main thread's work), between small structural texts.
 */
export function renderJson(answer: BatchAnswer): Buffer[] {
  const out = new JsonPieces();
  out.add('{"meta":' + JSON.stringify(answer.meta) + ',"values":');
  columnsJson(out, answer.fields);
  if (answer.components) {
    out.add(',"components":{');
    Object.entries(answer.components).forEach(([c, cols], i) => {
      out.add((i > 0 ? ',' : '') + JSON.stringify(c) + ':');
      columnsJson(out, cols);
    });
    out.add('}');
  }
  if (answer.maxwellResiduals) {
    out.add(',"maxwellResiduals":');
    columnsJson(out, answer.maxwellResiduals);
  }
  out.add(
    ',"status":[' + answer.status.join(',') +
    '],"warningFlags":[' + answer.warningFlags.join(',') +
    '],"statusMessages":' + JSON.stringify(answer.statusMessages) +
    ',"warnings":' + JSON.stringify(answer.warnings) +
    '}',
  );
  return out.done();
}

/** {"a":[…],"g":{"x":[…]}}: dotted names ("degeneracy.eta") nest one level, groups in order of first appearance. */
function columnsJson(out: JsonPieces, columns: Record<string, unknown>) {
  const top: Array<[string, unknown] | [string, Array<[string, unknown]>, true]> = [];
  const groups = new Map<string, Array<[string, unknown]>>();
  for (const [name, column] of Object.entries(columns)) {
    const dot = name.indexOf('.');
    if (dot < 0) top.push([name, column]);
    else {
      const group = name.slice(0, dot);
      let members = groups.get(group);
      if (!members) {
        groups.set(group, (members = []));
        top.push([group, members, true]);
      }
      members.push([name.slice(dot + 1), column]);
    }
  }
  const entry = (key: string, column: unknown) => {
    out.add(JSON.stringify(key) + ':[');
    out.addParts((column as JsonParts).jsonParts);
    out.add(']');
  };
  out.add('{');
  top.forEach((item, i) => {
    if (i > 0) out.add(',');
    if (item.length === 3) {
      out.add(JSON.stringify(item[0]) + ':{');
      item[1].forEach(([key, column], j) => {
        if (j > 0) out.add(',');
        entry(key, column);
      });
      out.add('}');
    } else entry(item[0], item[1]);
  });
  out.add('}');
}
