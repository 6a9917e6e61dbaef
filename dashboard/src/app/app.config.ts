import { provideHttpClient, withInterceptors } from '@angular/common/http';
import {
  ApplicationConfig,
  provideBrowserGlobalErrorListeners,
  provideZonelessChangeDetection,
} from '@angular/core';
import { MAT_ICON_DEFAULT_OPTIONS, MatIconDefaultOptions } from '@angular/material/icon';
import { provideRouter, withComponentInputBinding } from '@angular/router';

import { routes } from './app.routes';
import { sessionInterceptor } from './core/session-interceptor';
import { provideGraphql } from './core/graphql';

/** Icons come from the self-hosted Material Symbols Outlined font declared in styles.scss. */
const iconOptions: MatIconDefaultOptions = { fontSet: 'material-symbols-outlined' };

export const appConfig: ApplicationConfig = {
  providers: [
    provideBrowserGlobalErrorListeners(),
    // No zone.js: change detection is driven by signals and template events.
    provideZonelessChangeDetection(),
    // The session is restored by the route guards (one refresh from the cookie on first navigation).
    provideRouter(routes, withComponentInputBinding()),
    provideHttpClient(withInterceptors([sessionInterceptor])),
    // Account data through apollo-angular against /graphql (core/graphql.ts).
    provideGraphql(),
    { provide: MAT_ICON_DEFAULT_OPTIONS, useValue: iconOptions },
  ],
};
