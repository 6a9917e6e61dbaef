/** The mails of the jobs feature: a batch job or table build finished, or failed (gateway/mail/layout.ts). */
import { render, type RenderedMail } from '../mail/layout.js';

export interface JobMailInput {
  displayName: string;
  kind: 'batch' | 'table';
  name: string;
  organisationName: string;
  link: string;
  points: number;
  seconds: number | null;
}

const what = (kind: 'batch' | 'table') => (kind === 'batch' ? 'batch job' : 'table build');

export function jobFinishedMail(input: JobMailInput & { summary: string }): RenderedMail {
  return render({
    subject: `Your ${what(input.kind)} "${input.name}" is ready`,
    preview: `${input.summary} Results are ready to download.`,
    heading: `${input.kind === 'batch' ? 'Batch job' : 'Table build'} finished`,
    paragraphs: [
      `Hello ${input.displayName},`,
      `The ${what(input.kind)} "${input.name}" of ${input.organisationName} finished${input.seconds !== null ? ` in ${formatSeconds(input.seconds)}` : ''}. ${input.summary}`,
      input.kind === 'batch'
        ? 'The results are ready as CSV and HDF5, each with its SHA-256 checksum.'
        : 'The HDF5 table and its accuracy report are ready to download.',
    ],
    action: { label: 'Open the job', url: input.link },
    reason: `You get this mail because you submitted this ${what(input.kind)} to Fermiwell.`,
  });
}

export function jobFailedMail(input: JobMailInput & { error: string }): RenderedMail {
  return render({
    subject: `Your ${what(input.kind)} "${input.name}" failed`,
    preview: input.error,
    heading: `${input.kind === 'batch' ? 'Batch job' : 'Table build'} failed`,
    paragraphs: [
      `Hello ${input.displayName},`,
      `The ${what(input.kind)} "${input.name}" of ${input.organisationName} stopped without a result: ${input.error}`,
      input.kind === 'batch'
        ? 'Only the points that were computed count against your quota. You can submit the upload again once the cause is fixed.'
        : 'A failed table build does not count against your plan’s table builds.',
    ],
    action: { label: 'Open the job', url: input.link },
    reason: `You get this mail because you submitted this ${what(input.kind)} to Fermiwell.`,
  });
}

function formatSeconds(s: number): string {
  if (s < 90) return `${Math.max(1, Math.round(s))} s`;
  if (s < 5400) return `${Math.round(s / 60)} min`;
  return `${(s / 3600).toFixed(1)} h`;
}
