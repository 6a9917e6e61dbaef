import { COMPONENTS, STATE_FIELDS, statusWords, warningWords, type Column, type EvaluateResponse } from './eos-types';

/** Most points shown as table columns (the rest is in the download-free snippets). */
export const MAX_SHOWN_POINTS = 12;

export interface ResultRow {
  key: string;
  label: string;
  unit: string;
  /** Set on per-component rows. */
  component?: string;
  values: Column;
}

export interface PointNote {
  point: number;
  status: number;
  statusText: string;
  ok: boolean;
  warnings: string[];
}

/** Table rows: every returned column in the order of the schema, then per-component rows. */
export function resultRows(response: EvaluateResponse, shown = MAX_SHOWN_POINTS): ResultRow[] {
  const rows: ResultRow[] = [];
  // The state first (density, temperature), then the schema's order.
  const order = ['density', 'temperature', ...Object.keys(STATE_FIELDS)];
  const keys = Object.keys(response.values).sort((a, b) => order.indexOf(a) - order.indexOf(b));
  for (const key of keys) {
    const meta = STATE_FIELDS[key] ?? { label: key, unit: '' };
    rows.push({ key, label: meta.label, unit: meta.unit, values: response.values[key].slice(0, shown) });
  }
  for (const component of COMPONENTS) {
    const columns = response.components?.[component];
    if (!columns) continue;
    for (const [key, values] of Object.entries(columns)) {
      const meta = STATE_FIELDS[key] ?? { label: key, unit: '' };
      rows.push({ key: `${component}.${key}`, label: meta.label, unit: meta.unit, component, values: values.slice(0, shown) });
    }
  }
  return rows;
}

/** Per point: the status and the physics warnings in plain words (server messages preferred). */
export function pointNotes(response: EvaluateResponse): PointNote[] {
  return response.status.map((status, point) => {
    const message = response.statusMessages.find((m) => m.point === point)?.message;
    const serverWarnings = response.warnings.filter((w) => w.point === point).map((w) => w.message);
    return {
      point,
      status,
      ok: status === 0,
      statusText: message ? `${statusWords(status)}: ${message}` : statusWords(status),
      warnings: serverWarnings.length ? serverWarnings : warningWords(response.warningFlags[point] ?? 0),
    };
  });
}
