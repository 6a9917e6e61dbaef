/** What an authenticated API key brings to a request (set on res.locals.apiKey by keys/auth.ts). */
export const SCOPES = ['eos:evaluate', 'jobs:write', 'usage:read'] as const;
export type Scope = (typeof SCOPES)[number];

export interface PlanLimits {
  plan: string;
  pointsPerMonth: number;
  requestsPerSecond: number;
  maxBatch: number;
  /** null = unlimited */
  tableBuildsPerMonth: number | null;
}

export interface ApiKeyContext {
  keyId: string;
  organisationId: string;
  scopes: readonly Scope[];
  limits: PlanLimits;
}
