import { Injectable, inject } from '@angular/core';
import { Apollo, gql } from 'apollo-angular';
import { firstValueFrom } from 'rxjs';

export interface Limits {
  readonly pointsPerMonth: number;
  readonly requestsPerSecond: number;
  readonly maxBatch: number;
  /** null = unlimited */
  readonly tableBuildsPerMonth: number | null;
}

export interface LimitOverride {
  readonly pointsPerMonth: number | null;
  readonly requestsPerSecond: number | null;
  readonly maxBatch: number | null;
  readonly tableBuildsPerMonth: number | null;
  readonly tableBuildsUnlimited: boolean;
  readonly reason: string;
  readonly setByEmail: string | null;
  readonly updatedAt: string;
}

export interface OperatorOrganisation {
  readonly id: string;
  readonly name: string;
  readonly slug: string;
  readonly createdAt: string;
  readonly plan: string;
  readonly planName: string;
  readonly memberCount: number;
  readonly activeKeyCount: number;
  readonly limits: Limits;
  readonly planLimits: Limits;
  readonly override: LimitOverride | null;
  readonly usage: {
    readonly points: number;
    readonly requests: number;
    readonly errors: number;
    readonly quotaFraction: number;
    readonly recentRequests: number;
    readonly recentErrors: number;
  };
}

export interface OperatorHealth {
  readonly checkedAt: string;
  readonly ready: boolean;
  readonly checks: readonly { readonly name: string; readonly ok: boolean; readonly detail: string | null }[];
  readonly instance: Record<string, number | null>;
  readonly platform: {
    readonly organisations: number;
    readonly users: number;
    readonly activeKeys: number;
    readonly pointsThisPeriod: number;
    readonly requestsThisPeriod: number;
    readonly errorsThisPeriod: number;
    readonly periodStart: string;
  };
}

export interface OperatorOverview {
  readonly periodStart: string;
  readonly periodEnd: string;
  readonly organisations: readonly OperatorOrganisation[];
  readonly health: OperatorHealth;
}

export interface LimitsChange {
  readonly plan?: string;
  readonly overrides?: {
    readonly pointsPerMonth: number | null;
    readonly requestsPerSecond: number | null;
    readonly maxBatch: number | null;
    readonly tableBuildsPerMonth: number | null;
    readonly tableBuildsUnlimited: boolean;
  };
  readonly reason: string;
}

const LIMITS = `pointsPerMonth requestsPerSecond maxBatch tableBuildsPerMonth`;
const ORGANISATION = `
  id name slug createdAt plan planName memberCount activeKeyCount
  limits { ${LIMITS} }
  planLimits { ${LIMITS} }
  override { ${LIMITS} tableBuildsUnlimited reason setByEmail updatedAt }
  usage { points requests errors quotaFraction recentRequests recentErrors }
`;

export const OPERATOR_QUERY = gql`
  query Operator {
    operatorOrganisations { periodStart periodEnd items { ${ORGANISATION} } }
    operatorHealth {
      checkedAt ready
      checks { name ok detail }
      instance {
        uptimeSeconds residentMemoryBytes eventLoopLagP99Seconds httpRequests httpServerErrors httpMeanSeconds
        pointsEvaluated poolThreads poolQueueDepth poolUtilization dbConnectionsUsed dbConnectionsFree dbConnectionsPending meteringFlushLagSeconds
      }
      platform { organisations users activeKeys pointsThisPeriod requestsThisPeriod errorsThisPeriod periodStart }
    }
  }
`;

export const SET_LIMITS_MUTATION = gql`
  mutation SetOrganisationLimits($organisationId: ID!, $input: OrganisationLimitsInput!) {
    setOrganisationLimits(organisationId: $organisationId, input: $input) { ${ORGANISATION} }
  }
`;

/** The Operator page's data through GraphQL (operators only; the gateway enforces it). */
@Injectable({ providedIn: 'root' })
export class OperatorApi {
  private readonly apollo = inject(Apollo);

  async overview(): Promise<OperatorOverview> {
    const result = await firstValueFrom(
      this.apollo.query<{ operatorOrganisations: { periodStart: string; periodEnd: string; items: OperatorOrganisation[] }; operatorHealth: OperatorHealth }>({ query: OPERATOR_QUERY }),
    );
    const data = result.data!;
    return { periodStart: data.operatorOrganisations.periodStart, periodEnd: data.operatorOrganisations.periodEnd, organisations: data.operatorOrganisations.items, health: data.operatorHealth };
  }

  async setLimits(organisationId: string, change: LimitsChange): Promise<OperatorOrganisation> {
    const result = await firstValueFrom(
      this.apollo.mutate<{ setOrganisationLimits: OperatorOrganisation }, { organisationId: string; input: LimitsChange }>({
        mutation: SET_LIMITS_MUTATION,
        variables: { organisationId, input: change },
      }),
    );
    return result.data!.setOrganisationLimits;
  }
}
