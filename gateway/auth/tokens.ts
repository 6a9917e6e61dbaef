/**
 * Secrets of the session side. One-time tokens (e-mail links, refresh tokens, invitations) are 256
 * random bits in base64url; only their SHA-256 is stored. Access tokens are short-lived JWTs
 * (HS256, issuer "fermiwell", audience "fermiwell-dashboard", subject = user id, sid = session id),
 * verified with the algorithm pinned so an unsigned or differently signed token never passes.
 */
import { createHash, randomBytes } from 'node:crypto';
import jwt from 'jsonwebtoken';
import { ProblemError } from '../shared/problem.js';

export const ISSUER = 'fermiwell';
export const AUDIENCE = 'fermiwell-dashboard';

export function newOpaqueToken(): string {
  return randomBytes(32).toString('base64url');
}

export function hashToken(token: string): string {
  return createHash('sha256').update(token, 'utf8').digest('hex');
}

export interface AccessClaims {
  userId: string;
  sessionId: string;
}

export function signAccessToken(claims: AccessClaims, secret: string, ttlSeconds: number): string {
  return jwt.sign({ sid: claims.sessionId }, secret, { algorithm: 'HS256', expiresIn: ttlSeconds, subject: claims.userId, issuer: ISSUER, audience: AUDIENCE });
}

export function verifyAccessToken(token: string, secret: string): AccessClaims {
  let payload: jwt.JwtPayload | string;
  try {
    payload = jwt.verify(token, secret, { algorithms: ['HS256'], issuer: ISSUER, audience: AUDIENCE });
  } catch (error) {
    if (error instanceof jwt.TokenExpiredError) {
      throw new ProblemError('session-expired', 401, 'Session token expired', 'The access token has expired. Get a new one with POST /v1/auth/session/refresh (the refresh cookie is sent automatically).');
    }
    throw new ProblemError('invalid-session', 401, 'Invalid session token', 'The access token is not valid (malformed, altered or not issued by this service). Sign in again.');
  }
  if (typeof payload === 'string' || typeof payload.sub !== 'string' || typeof payload['sid'] !== 'string') {
    throw new ProblemError('invalid-session', 401, 'Invalid session token', 'The access token is not valid. Sign in again.');
  }
  return { userId: payload.sub, sessionId: payload['sid'] };
}
