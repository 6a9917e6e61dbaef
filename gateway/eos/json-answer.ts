/**
 * The JSON form of an EOS answer: the workers' JSON bytes of every column written as they are,
 * between small structural texts (no joining into one large string, no re-encoding). Tiny batches
 * computed on the event loop bring their columns as strings, which join the text directly.
 */
import type { Response } from 'express';
import type { BatchAnswer, Meta, TableAccuracyMeta } from './service.js';
import type { JsonParts } from './tasks.js';

/** Answers up to this size are written as one buffer; larger ones piece by piece. */
const ONE_BUFFER_BYTES = 256 * 1024;

/**
 * Writes the pieces of a JSON answer (renderJson) with their total Content-Length. An answer that is
 * one text (every small answer) is ended as a string: Node then sends headers and body in one write.
 */
export function sendJson(res: Response, pieces: Array<Buffer | string>) {
  let length = 0;
  for (const p of pieces) length += typeof p === 'string' ? Buffer.byteLength(p, 'utf8') : p.length;
  // the header res.type('application/json') writes, without its media-type lookup
  res.statusCode = 200;
  res.setHeader('Content-Type', 'application/json; charset=utf-8');
  res.setHeader('Content-Length', length);
  if (pieces.length === 1) {
    res.end(pieces[0]!);
    return;
  }
  if (length <= ONE_BUFFER_BYTES) {
    res.end(Buffer.concat(pieces.map((p) => (typeof p === 'string' ? Buffer.from(p, 'utf8') : p)), length));
    return;
  }
  // corked: the pieces leave in large writes (end() flushes them); never copied into one buffer
  res.cork();
  for (const p of pieces) res.write(p);
  res.end();
}

/** Builds a JSON text from small strings and byte pieces that are referenced, never copied. */
class JsonPieces {
  readonly pieces: Array<Buffer | string> = [];
  private text = '';

  add(text: string) {
    this.text += text;
  }

  /** The JSON parts of a column, joined with commas. */
  addParts(parts: ReadonlyArray<Uint8Array | string>) {
    for (let i = 0; i < parts.length; i++) {
      if (i > 0) this.text += ',';
      const part = parts[i]!;
      // text of a tiny batch computed on the event loop (pool.ts runInline): joins the text as it is
      if (typeof part === 'string') this.text += part;
      // small parts (single points) join the text: one buffer for the whole answer
      else if (part.byteLength <= 256) this.text += Buffer.from(part.buffer, part.byteOffset, part.byteLength).toString('utf8');
      else {
        this.flushText();
        this.pieces.push(Buffer.from(part.buffer, part.byteOffset, part.byteLength));
      }
    }
  }

  done(): Array<Buffer | string> {
    this.flushText();
    return this.pieces;
  }

  private flushText() {
    if (this.text.length === 0) return;
    this.pieces.push(this.text);
    this.text = '';
  }
}

/** The JSON text of the table's accuracy report last written (the service reads it once and keeps that object unchanged). */
let accuracyReport: TableAccuracyMeta | undefined;
let accuracyText = '';

/** '"name":' of the keys written so far (field, component and meta names: a small fixed set). */
const keyTexts = new Map<string, string>();

function keyJson(key: string): string {
  let text = keyTexts.get(key);
  if (text === undefined) {
    text = JSON.stringify(key) + ':';
    if (keyTexts.size < 1_000) keyTexts.set(key, text);
  }
  return text;
}

/**
 * JSON.stringify(meta), with the table's accuracy report (the largest part, the same object request
 * after request) written once and kept: own enumerable keys in order, undefined values left out,
 * as JSON.stringify does for a plain object.
 */
function metaJson(meta: Meta): string {
  let text = '';
  for (const key of Object.keys(meta) as Array<keyof Meta>) {
    const value = meta[key];
    if (value === undefined) continue;
    let json: string;
    if (key === 'tableAccuracy' && value !== null) {
      if (value !== accuracyReport) {
        accuracyText = JSON.stringify(value);
        accuracyReport = value as TableAccuracyMeta;
      }
      json = accuracyText;
    } else json = JSON.stringify(value);
    text += (text.length === 0 ? '{' : ',') + keyJson(key) + json;
  }
  return text.length === 0 ? '{}' : text + '}';
}

/**
 * The JSON answer as pieces to write in order: the workers' JSON bytes of every column, referenced
 * as they are (no joining into one large string, no re-encoding: for a 1e5-point batch that was
 * most of the main thread's work), between small structural texts.
 */
export function renderJson(answer: BatchAnswer): Array<Buffer | string> {
  const out = new JsonPieces();
  out.add('{"meta":' + metaJson(answer.meta) + ',"values":');
  columnsJson(out, answer.fields);
  if (answer.components) {
    out.add(',"components":{');
    let i = 0;
    for (const c of Object.keys(answer.components)) {
      out.add((i++ > 0 ? ',' : '') + keyJson(c));
      columnsJson(out, answer.components[c]!);
    }
    out.add('}');
  }
  if (answer.maxwellResiduals) {
    out.add(',"maxwellResiduals":');
    columnsJson(out, answer.maxwellResiduals);
  }
  out.add(
    ',"status":[' + answer.status.join(',') +
    '],"warningFlags":[' + answer.warningFlags.join(',') +
    '],"statusMessages":' + (answer.statusMessages.length === 0 ? '[]' : JSON.stringify(answer.statusMessages)) +
    ',"warnings":' + (answer.warnings.length === 0 ? '[]' : JSON.stringify(answer.warnings)) +
    '}',
  );
  return out.done();
}

/** {"a":[…],"g":{"x":[…]}}: dotted names ("degeneracy.eta") nest one level, groups in order of first appearance. */
function columnsJson(out: JsonPieces, columns: Record<string, unknown>) {
  const names = Object.keys(columns);
  let dotted = false;
  for (const name of names) if (name.includes('.')) dotted = true;
  if (!dotted) {
    // no groups (evaluate, invert): the columns in order
    for (let i = 0; i < names.length; i++) {
      const parts = (columns[names[i]!] as JsonParts).jsonParts;
      const head = (i > 0 ? ',' : '{') + keyJson(names[i]!) + '[';
      // one text part (a tiny batch computed on the event loop): one addition
      if (parts.length === 1 && typeof parts[0] === 'string') out.add(head + parts[0] + ']');
      else {
        out.add(head);
        out.addParts(parts);
        out.add(']');
      }
    }
    out.add(names.length > 0 ? '}' : '{}');
    return;
  }
  const top: Array<[string, unknown] | [string, Array<[string, unknown]>, true]> = [];
  const groups = new Map<string, Array<[string, unknown]>>();
  for (const name of names) {
    const column = columns[name];
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
    out.add(keyJson(key) + '[');
    out.addParts((column as JsonParts).jsonParts);
    out.add(']');
  };
  out.add('{');
  top.forEach((item, i) => {
    if (i > 0) out.add(',');
    if (item.length === 3) {
      out.add(keyJson(item[0]) + '{');
      item[1].forEach(([key, column], j) => {
        if (j > 0) out.add(',');
        entry(key, column);
      });
      out.add('}');
    } else entry(item[0], item[1]);
  });
  out.add('}');
}
