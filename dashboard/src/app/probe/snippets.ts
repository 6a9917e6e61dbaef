import { Clipboard } from '@angular/cdk/clipboard';
import { ChangeDetectionStrategy, Component, computed, inject, input, signal } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatIcon } from '@angular/material/icon';
import { MatTab, MatTabGroup } from '@angular/material/tabs';

import { KEY_VARIABLE, SNIPPET_LANGUAGES, renderSnippets, type SnippetLanguage, type SnippetRequest } from './snippet-templates';

// The templates live in snippet-templates.ts, framework-free, so examples/ renders the same ones.
export {
  KEY_VARIABLE, SNIPPET_LANGUAGES, SNIPPET_TEMPLATES, renderSnippet, renderSnippets, type SnippetLanguage, type SnippetRequest,
} from './snippet-templates';

/** The current request as code, one tab per language, each with a copy button. */
@Component({
  selector: 'fw-snippets',
  imports: [MatTabGroup, MatTab, MatButton, MatIcon],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    @if (snippets(); as all) {
      <p class="note">
        The key is read from the <code>{{ keyVariable }}</code> environment variable:
        <code>export {{ keyVariable }}=…</code> first. The secret is never written into the code.
      </p>
      <mat-tab-group mat-stretch-tabs="false" animationDuration="0ms">
        @for (lang of languages; track lang.id) {
          <mat-tab [label]="lang.label">
            <div class="snippet">
              <button matButton="tonal" type="button" class="copy" (click)="copy(lang.id, all[lang.id])">
                <mat-icon aria-hidden="true">{{ copied() === lang.id ? 'check' : 'content_copy' }}</mat-icon>
                {{ copied() === lang.id ? 'Copied' : 'Copy' }}
              </button>
              <pre tabindex="0" [attr.aria-label]="lang.label + ' snippet'"><code>{{ all[lang.id] }}</code></pre>
            </div>
          </mat-tab>
        }
      </mat-tab-group>
    } @else {
      <p class="note">Complete the form to see the request as code.</p>
    }
  `,
  styles: `
    .note { font: var(--mat-sys-body-medium); color: var(--mat-sys-on-surface-variant); }
    .snippet { position: relative; }
    .copy { position: absolute; top: 8px; right: 8px; }
    pre { margin: 0; padding: 16px; padding-top: 48px; overflow: auto; max-height: 420px; background: var(--mat-sys-surface-container); border-radius: var(--mat-sys-corner-small); font-size: 0.82rem; }
  `,
})
export class Snippets {
  readonly request = input<SnippetRequest | null>(null);
  private readonly clipboard = inject(Clipboard);
  readonly languages = SNIPPET_LANGUAGES;
  readonly keyVariable = KEY_VARIABLE;
  readonly copied = signal<SnippetLanguage | null>(null);
  readonly snippets = computed(() => {
    const request = this.request();
    return request ? renderSnippets(request) : null;
  });

  copy(language: SnippetLanguage, text: string): void {
    if (this.clipboard.copy(text)) this.copied.set(language);
  }
}
