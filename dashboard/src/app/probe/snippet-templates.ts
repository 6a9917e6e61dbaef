/**
 * The one template source of the request snippets (curl, Python, C, Fortran, TypeScript).
 *
 * Framework-free on purpose (no Angular imports): the Probe page renders it in the browser
 * (snippets.ts), and `examples/snippets/generate.ts` renders the same templates into
 * `examples/snippets/` under Node; tests/examples checks those files are current, runs the Python,
 * curl and TypeScript snippets against a test gateway, and compiles and runs the C and Fortran ones.
 * The Fortran snippet uses the `fermiwell` module of examples/fortran (Fortran has no HTTP of its
 * own); the others stand alone.
 */

export type SnippetLanguage = 'curl' | 'python' | 'c' | 'fortran' | 'typescript';

export interface SnippetRequest {
  /** Absolute URL, e.g. https://fermiwell.example/v1/eos/evaluate. */
  url: string;
  /** The JSON body as sent. */
  body: unknown;
}

export const SNIPPET_LANGUAGES: { id: SnippetLanguage; label: string; file: string }[] = [
  { id: 'curl', label: 'curl', file: 'request.sh' },
  { id: 'python', label: 'Python', file: 'request.py' },
  { id: 'c', label: 'C (libcurl)', file: 'request.c' },
  { id: 'fortran', label: 'Fortran', file: 'request.f90' },
  { id: 'typescript', label: 'TypeScript', file: 'request.ts' },
];

/** The environment variable every snippet reads the API key from. The secret itself never appears. */
export const KEY_VARIABLE = 'FERMIWELL_KEY';

/**
 * Placeholders: {{URL}}, {{BASE_URL}} (scheme and host), {{PATH}}, {{JSON}} (pretty JSON),
 * {{JSON_SHELL}} (single-quoted for a POSIX shell), {{JSON_C}} (C string literal lines),
 * {{JSON_FORTRAN}} (Fortran character concatenation), {{KEY_VAR}}.
 */
export const SNIPPET_TEMPLATES: Record<SnippetLanguage, string> = {
  curl: `curl -sS --fail-with-body -X POST '{{URL}}' \\
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
print("status", result["status"])
for warning in result["warnings"]:
    print("warning at point", warning["point"], warning["message"])
`,
  c: `/* cc request.c -lcurl -o request && ./request */
#include <curl/curl.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static const char *URL = "{{URL}}";
static const char *BODY =
{{JSON_C}};

/* collects the answer: the JSON result, or an RFC 9457 problem+json on a 4xx/5xx */
static size_t collect(char *data, size_t size, size_t count, void *user) {
  char **text = user;
  size_t old = *text ? strlen(*text) : 0, add = size * count;
  char *grown = realloc(*text, old + add + 1);
  if (!grown) return 0;
  memcpy(grown + old, data, add);
  grown[old + add] = '\\0';
  *text = grown;
  return add;
}

int main(void) {
  const char *key = getenv("{{KEY_VAR}}");
  if (!key) { fprintf(stderr, "set {{KEY_VAR}}\\n"); return 1; }
  char auth[512];
  snprintf(auth, sizeof auth, "Authorization: Bearer %s", key);

  CURL *curl = curl_easy_init();
  if (!curl) return 1;
  char *answer = NULL;
  struct curl_slist *headers = NULL;
  headers = curl_slist_append(headers, auth);
  headers = curl_slist_append(headers, "Content-Type: application/json");
  curl_easy_setopt(curl, CURLOPT_URL, URL);
  curl_easy_setopt(curl, CURLOPT_HTTPHEADER, headers);
  curl_easy_setopt(curl, CURLOPT_POSTFIELDS, BODY); /* makes it a POST */
  curl_easy_setopt(curl, CURLOPT_WRITEFUNCTION, collect);
  curl_easy_setopt(curl, CURLOPT_WRITEDATA, &answer);
  CURLcode rc = curl_easy_perform(curl);
  long status = 0;
  curl_easy_getinfo(curl, CURLINFO_RESPONSE_CODE, &status);
  curl_slist_free_all(headers);
  curl_easy_cleanup(curl);
  if (rc != CURLE_OK) { fprintf(stderr, "%s\\n", curl_easy_strerror(rc)); return 1; }
  /* 200: the result; otherwise the problem, whose "detail" says what to change */
  fprintf(status == 200 ? stdout : stderr, "%s\\n", answer ? answer : "");
  free(answer);
  return status == 200 ? 0 : 2;
}
`,
  fortran: `! POST {{URL}} with the JSON body below.
! Uses the fermiwell module and C client from examples/fortran and examples/c of the Fermiwell
! sources (Fortran has no HTTP of its own):
!   gfortran -ffree-line-length-none fermiwell.f90 request.f90 fermiwell.c -lcurl -o request && ./request
program request
  use fermiwell
  implicit none
  character(len=*), parameter :: body = &
{{JSON_FORTRAN}}
  type(fermiwell_client) :: fw
  character(:), allocatable :: answer
  integer :: ierr

  call fw_open(fw, url="{{BASE_URL}}", ierr=ierr) ! the key comes from \${{KEY_VAR}}
  if (ierr /= FW_OK) stop 'set {{KEY_VAR}}'
  call fw_post_json(fw, "{{PATH}}", body, answer, ierr)
  if (ierr /= FW_OK) then
    print '(a)', fw_error_message(fw) ! the problem's title and detail
    stop 2
  end if
  print '(a)', answer
  call fw_close(fw)
end program request
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
// the answer, or an RFC 9457 problem+json (title, detail) when the request was refused
const result = (await response.json()) as {
  values: Record<string, (number | null)[]>;
  status: number[];
  warnings: { point: number; message: string }[];
  title?: string;
  detail?: string;
};
if (!response.ok) throw new Error(\`\${response.status}: \${result.detail ?? result.title}\`);
console.log(result.values, result.status, result.warnings);
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

/** Splits an absolute URL into scheme+host and path (with query). */
function splitUrl(url: string): { base: string; path: string } {
  const match = /^([a-z][a-z0-9+.-]*:\/\/[^/?#]*)(.*)$/i.exec(url);
  return match ? { base: match[1]!, path: match[2] || '/' } : { base: '', path: url };
}

/** Fills the template of one language for a request. */
export function renderSnippet(language: SnippetLanguage, request: SnippetRequest): string {
  const json = JSON.stringify(request.body, null, 2);
  const compact = JSON.stringify(request.body);
  const { base, path } = splitUrl(request.url);
  const values: Record<string, string> = {
    URL: request.url,
    BASE_URL: base,
    PATH: path,
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
