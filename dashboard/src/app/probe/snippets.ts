import { Clipboard } from '@angular/cdk/clipboard';
import { ChangeDetectionStrategy, Component, computed, inject, input, signal } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatIcon } from '@angular/material/icon';
import { MatTab, MatTabGroup } from '@angular/material/tabs';

export type SnippetLanguage = 'curl' | 'python' | 'c' | 'fortran' | 'typescript';

export interface SnippetRequest {
  /** Absolute URL, e.g. https://fermiwell.example/v1/eos/evaluate. */
  url: string;
  /** The JSON body as sent. */
  body: unknown;
}

export const SNIPPET_LANGUAGES: { id: SnippetLanguage; label: string }[] = [
  { id: 'curl', label: 'curl' },
  { id: 'python', label: 'Python' },
  { id: 'c', label: 'C (libcurl)' },
  { id: 'fortran', label: 'Fortran' },
  { id: 'typescript', label: 'TypeScript' },
];

/** The environment variable every snippet reads the API key from. The secret itself never appears. */
export const KEY_VARIABLE = 'FERMIWELL_KEY';

/**
 * The one template source of the snippets. Placeholders: {{URL}}, {{JSON}} (pretty JSON),
 * {{JSON_SHELL}} (single-quoted for a POSIX shell), {{JSON_C}} (C string literal lines),
 * {{JSON_FORTRAN}} (Fortran character concatenation), {{KEY_VAR}}.
 */
export const SNIPPET_TEMPLATES: Record<SnippetLanguage, string> = {
  curl: `curl -sS -X POST '{{URL}}' \\
  -H "Authorization: Bearer \${{KEY_VAR}}" \\
  -H 'Content-Type: application/json' \\
  --data-binary {{JSON_SHELL}}
`,
  python: `import json
import os
import urllib.error
import urllib.request

URL = "{{URL}}"
payload = json.loads(r"""{{JSON}}""")

request = urllib.request.Request(
    URL,
    data=json.dumps(payload).encode("utf-8"),
    method="POST",
    headers={
        "Authorization": "Bearer " + os.environ["{{KEY_VAR}}"],
        "Content-Type": "application/json",
    },
)
try:
    with urllib.request.urlopen(request, timeout=60) as response:
        result = json.load(response)
except urllib.error.HTTPError as error:
    problem = json.load(error)
    raise SystemExit(f"{error.code}: {problem.get('detail') or problem.get('title')}")

for name, column in result["values"].items():
    print(name, column)
for warning in result["warnings"]:
    print("warning at point", warning["point"], warning["message"])
`,
  c: `/* cc probe.c -lcurl -o probe && ./probe */
#include <curl/curl.h>
#include <stdio.h>
#include <stdlib.h>

static const char *URL = "{{URL}}";
static const char *BODY =
{{JSON_C}};

int main(void) {
  const char *key = getenv("{{KEY_VAR}}");
  if (!key) { fprintf(stderr, "set {{KEY_VAR}}\\n"); return 1; }
  char auth[512];
  snprintf(auth, sizeof auth, "Authorization: Bearer %s", key);

  CURL *curl = curl_easy_init();
  if (!curl) return 1;
  struct curl_slist *headers = NULL;
  headers = curl_slist_append(headers, auth);
  headers = curl_slist_append(headers, "Content-Type: application/json");
  curl_easy_setopt(curl, CURLOPT_URL, URL);
  curl_easy_setopt(curl, CURLOPT_HTTPHEADER, headers);
  curl_easy_setopt(curl, CURLOPT_POSTFIELDS, BODY); /* POST; the JSON answer goes to stdout */
  CURLcode rc = curl_easy_perform(curl);
  long status = 0;
  curl_easy_getinfo(curl, CURLINFO_RESPONSE_CODE, &status);
  curl_slist_free_all(headers);
  curl_easy_cleanup(curl);
  if (rc != CURLE_OK) { fprintf(stderr, "%s\\n", curl_easy_strerror(rc)); return 1; }
  return status == 200 ? 0 : 2;
}
`,
  fortran: `! Sketch: Fortran calls a small C helper through iso_c_binding.
! The helper is the C snippet's main() turned into
!   int fermiwell_post(const char *url, const char *body);  /* POST with $FERMIWELL_KEY */
! Build: gfortran probe.f90 fermiwell_post.c -lcurl -o probe
program probe
  use, intrinsic :: iso_c_binding, only: c_char, c_int, c_null_char
  implicit none
  interface
    function fermiwell_post(url, body) bind(C, name="fermiwell_post") result(status)
      import :: c_char, c_int
      character(kind=c_char), dimension(*), intent(in) :: url, body
      integer(c_int) :: status
    end function fermiwell_post
  end interface
  character(len=*), parameter :: url = "{{URL}}"
  character(len=*), parameter :: body = &
{{JSON_FORTRAN}}
  integer(c_int) :: status

  status = fermiwell_post(url // c_null_char, body // c_null_char)
  if (status /= 0) stop 'request failed'
end program probe
`,
  typescript: `const url = '{{URL}}';
const body = {{JSON}};

const response = await fetch(url, {
  method: 'POST',
  headers: {
    Authorization: \`Bearer \${process.env['{{KEY_VAR}}']}\`,
    'Content-Type': 'application/json',
  },
  body: JSON.stringify(body),
});
const result = await response.json();
if (!response.ok) throw new Error(\`\${response.status}: \${result.detail ?? result.title}\`);
console.log(result.values, result.warnings);
`,
};

function shellQuote(text: string): string {
  return `'${text.replace(/'/g, `'\\''`)}'`;
}

function cLines(json: string): string {
  return json
    .split('\n')
    .map((line, i, all) => `  "${line.replace(/\\/g, '\\\\').replace(/"/g, '\\"')}${i < all.length - 1 ? '\\n' : ''}"`)
    .join('\n');
}

function fortranLines(json: string): string {
  // Fortran strings here use double quotes, doubled inside; one continuation line per JSON line.
  const lines = json.split('\n');
  return lines.map((line, i) => `    "${line.replace(/"/g, '""')}"${i < lines.length - 1 ? ' // &' : ''}`).join('\n');
}

/** Fills the template of one language for a request. */
export function renderSnippet(language: SnippetLanguage, request: SnippetRequest): string {
  const json = JSON.stringify(request.body, null, 2);
  const compact = JSON.stringify(request.body);
  const values: Record<string, string> = {
    URL: request.url,
    JSON: json,
    JSON_SHELL: shellQuote(compact),
    JSON_C: cLines(json),
    JSON_FORTRAN: fortranLines(json),
    KEY_VAR: KEY_VARIABLE,
  };
  return SNIPPET_TEMPLATES[language].replace(/\{\{([A-Z_]+)\}\}/g, (_, name: string) => values[name] ?? '');
}

export function renderSnippets(request: SnippetRequest): Record<SnippetLanguage, string> {
  const out = {} as Record<SnippetLanguage, string>;
  for (const { id } of SNIPPET_LANGUAGES) out[id] = renderSnippet(id, request);
  return out;
}

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
