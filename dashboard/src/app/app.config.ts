import {
  ApplicationConfig,
  provideBrowserGlobalErrorListeners,
  provideZonelessChangeDetection,
} from '@angular/core';
import { MAT_ICON_DEFAULT_OPTIONS, MatIconDefaultOptions } from '@angular/material/icon';
import { provideRouter } from '@angular/router';

import { routes } from './app.routes';

/** Icons come from the self-hosted Material Symbols Outlined font declared in styles.scss. */
const iconOptions: MatIconDefaultOptions = { fontSet: 'material-symbols-outlined' };

export const appConfig: ApplicationConfig = {
  providers: [
    provideBrowserGlobalErrorListeners(),
    // No zone.js: change detection is driven by signals and template events.
    provideZonelessChangeDetection(),
    provideRouter(routes),
    { provide: MAT_ICON_DEFAULT_OPTIONS, useValue: iconOptions },
  ],
};
