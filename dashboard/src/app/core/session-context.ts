import { HttpContextToken } from '@angular/common/http';

/**
 * Set on requests that must not be refreshed-and-retried by the session interceptor: the session
 * routes themselves (a 401 from sign-in means wrong credentials, not an expired session) and the
 * one retry the interceptor makes after refreshing.
 */
export const SKIP_SESSION_RETRY = new HttpContextToken<boolean>(() => false);
