import { ChangeDetectionStrategy, Component } from '@angular/core';
import { RouterOutlet } from '@angular/router';

/**
 * The root: the router picks the layout — the signed-in shell (toolbar, side navigation) for the
 * dashboard's pages, or the plain layout for sign-in, sign-up and the pages mail links open.
 */
@Component({
  selector: 'fw-root',
  imports: [RouterOutlet],
  template: `<router-outlet />`,
  styles: `
    :host {
      display: block;
      height: 100%;
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class App {}
