import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';

/** A file of a job (upload, results, table) with its checksum (schema/openapi-jobs.yaml JobFile). */
export interface JobFile {
  readonly fileName: string;
  readonly contentType: string;
  readonly sizeBytes: number;
  readonly sha256: string;
  readonly url: string;
}

export interface QuantityAccuracy {
  readonly max: number | null;
  readonly median: number | null;
  readonly p99: number | null;
}

/** The builder's accuracy report, as GET /v1/tables/{id} shows it. */
export interface TableAccuracy {
  readonly maxRelativeError: number | null;
  readonly medianRelativeError: number | null;
  readonly maxwellMax: number | null;
  readonly cellCentres: number;
  readonly randomPoints: number;
  readonly quantities: Readonly<Record<string, QuantityAccuracy>>;
}

export type JobState = 'queued' | 'running' | 'completed' | 'failed' | 'cancelled';

/** A batch job or table build (schema/openapi-jobs.yaml Job). */
export interface Job {
  readonly id: string;
  readonly kind: 'batch' | 'table';
  readonly name: string;
  readonly state: JobState;
  readonly createdBy: string | null;
  readonly points: number;
  readonly pointsDone: number;
  readonly chunksTotal: number;
  readonly chunksDone: number;
  readonly progress: number;
  readonly pointsPerSecond: number | null;
  readonly etaSeconds: number | null;
  readonly createdAt: string;
  readonly startedAt: string | null;
  readonly finishedAt: string | null;
  readonly error: string | null;
  readonly request: Readonly<Record<string, unknown>>;
  readonly result: (Readonly<Record<string, unknown>> & { readonly accuracy?: TableAccuracy | null }) | null;
  readonly files: Readonly<Record<string, JobFile>>;
}

export interface BatchSubmission {
  readonly file: File;
  readonly name?: string;
  /** JSON of a composition; omitted when the file carries abar and zbar columns. */
  readonly composition?: string;
  readonly method: 'exact' | 'table';
}

export interface TableGridRequest {
  readonly logDensityYeMin: number;
  readonly logDensityYeMax: number;
  readonly logTemperatureMin: number;
  readonly logTemperatureMax: number;
  readonly pointsPerDecade: number;
}

export interface TableBuildSubmission {
  readonly name?: string;
  readonly grid: TableGridRequest;
  readonly composition?: Readonly<Record<string, unknown>>;
}

export const ACTIVE_STATES: readonly JobState[] = ['queued', 'running'];

/** Built-in mixtures (gateway/eos/builtin-mixtures.ts), for the composition pickers. */
export const BUILTIN_MIXTURES: readonly { readonly value: string; readonly label: string }[] = [
  { value: 'c12-o16', label: 'C/O 50/50' },
  { value: 'he4', label: 'Pure He-4' },
  { value: 'o16-ne20-mg24', label: 'O/Ne/Mg' },
  { value: 'fe56', label: 'Fe-56' },
  { value: 'h1-he4', label: 'Ionized H/He' },
];

/** /v1/jobs and /v1/tables for the current organisation (the interceptor adds the session and organisation). */
@Injectable({ providedIn: 'root' })
export class JobsApi {
  private readonly http = inject(HttpClient);

  jobs(): Observable<Job[]> {
    return this.http.get<{ items: Job[] }>('/v1/jobs').pipe(map((page) => page.items));
  }

  tables(): Observable<Job[]> {
    return this.http.get<{ items: Job[] }>('/v1/tables').pipe(map((page) => page.items));
  }

  submit(job: BatchSubmission): Observable<Job> {
    const form = new FormData();
    form.append('file', job.file, job.file.name);
    if (job.name) form.append('name', job.name);
    if (job.composition) form.append('composition', job.composition);
    form.append('method', job.method);
    return this.http.post<Job>('/v1/jobs', form);
  }

  requestTable(build: TableBuildSubmission): Observable<Job> {
    return this.http.post<Job>('/v1/tables', build);
  }

  cancel(job: Job): Observable<Job> {
    return this.http.post<Job>(`/v1/${job.kind === 'batch' ? 'jobs' : 'tables'}/${encodeURIComponent(job.id)}/cancel`, {});
  }

  /** A stored file as a Blob (the session travels in a header, so a plain link cannot fetch it). */
  download(file: JobFile): Observable<Blob> {
    return this.http.get(file.url, { responseType: 'blob' });
  }
}
