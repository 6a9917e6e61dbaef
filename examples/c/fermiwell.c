/*
 * fermiwell.c — the C client declared in fermiwell.h (libcurl; C99).
 *
 * One libcurl easy handle per client, reused across calls (keep-alive), so a hydro code pays the
 * connection once. Not thread-safe: use one client per thread.
 */
#include "fermiwell.h"

#include <curl/curl.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#define FW_DEFAULT_URL "http://127.0.0.1:8080"
#define FW_MAX_RETRIES 3 /* on 429 rate-limited and 503, after Retry-After seconds */

struct fw_buffer {
  char *data;
  size_t size;
  size_t cap;
};

struct fw_client {
  CURL *curl;
  char *base_url;
  char *auth_header;
  char error[2048];
  char meta[4096];
  char layout[8192];
  char content_type[128];
  long http_status;
  long retry_after;
};

/* ---------------------------------------------------------------------------------------------- */
/* small helpers                                                                                    */

static char *fw_strdup(const char *s) {
  size_t n = strlen(s) + 1;
  char *copy = malloc(n);
  if (copy) memcpy(copy, s, n);
  return copy;
}

static int fw_buffer_append(struct fw_buffer *b, const void *data, size_t n) {
  if (b->size + n + 1 > b->cap) {
    size_t cap = b->cap ? b->cap : 4096;
    while (cap < b->size + n + 1) cap *= 2;
    char *grown = realloc(b->data, cap);
    if (!grown) return 0;
    b->data = grown;
    b->cap = cap;
  }
  memcpy(b->data + b->size, data, n);
  b->size += n;
  b->data[b->size] = '\0';
  return 1;
}

static size_t fw_on_body(char *data, size_t size, size_t count, void *user) {
  struct fw_buffer *b = user;
  return fw_buffer_append(b, data, size * count) ? size * count : 0;
}

/* Copies a header's value (trimmed) when its name matches, case-insensitively. */
static void fw_take_header(const char *line, size_t len, const char *name, char *dest, size_t cap) {
  size_t nlen = strlen(name);
  if (len <= nlen || line[nlen] != ':') return;
  for (size_t i = 0; i < nlen; i++) {
    char a = line[i], b = name[i];
    if (a >= 'A' && a <= 'Z') a = (char)(a - 'A' + 'a');
    if (b >= 'A' && b <= 'Z') b = (char)(b - 'A' + 'a');
    if (a != b) return;
  }
  size_t start = nlen + 1, end = len;
  while (start < end && (line[start] == ' ' || line[start] == '\t')) start++;
  while (end > start && (line[end - 1] == '\r' || line[end - 1] == '\n' || line[end - 1] == ' ')) end--;
  size_t n = end - start < cap - 1 ? end - start : cap - 1;
  memcpy(dest, line + start, n);
  dest[n] = '\0';
}

static size_t fw_on_header(char *line, size_t size, size_t count, void *user) {
  fw_client *c = user;
  size_t len = size * count;
  char retry[32] = "";
  fw_take_header(line, len, "fermiwell-meta", c->meta, sizeof c->meta);
  fw_take_header(line, len, "fermiwell-layout", c->layout, sizeof c->layout);
  fw_take_header(line, len, "content-type", c->content_type, sizeof c->content_type);
  fw_take_header(line, len, "retry-after", retry, sizeof retry);
  if (retry[0]) c->retry_after = strtol(retry, NULL, 10);
  return len;
}

static size_t fw_count_items(const char *list) {
  if (!list || !*list) return 0;
  size_t n = 1;
  for (const char *p = list; *p; p++) n += *p == ',';
  return n;
}

static int fw_little_endian_host(void) {
  const uint16_t one = 1;
  return *(const unsigned char *)&one == 1;
}

/* Copies n doubles to or from little-endian bytes (a plain copy on little-endian hosts). */
static void fw_copy_le(void *dest, const void *src, size_t n) {
  if (fw_little_endian_host()) {
    memcpy(dest, src, 8 * n);
    return;
  }
  const unsigned char *s = src;
  unsigned char *d = dest;
  for (size_t i = 0; i < n; i++)
    for (int k = 0; k < 8; k++) d[8 * i + k] = s[8 * i + 7 - k];
}

/*
 * The string value of a top-level "key" in a flat JSON object (enough for problem+json), with the
 * JSON escapes decoded (\uXXXX to UTF-8). Returns 0 when absent.
 */
static int fw_json_string(const char *json, const char *key, char *out, size_t cap) {
  size_t klen = strlen(key);
  const char *p = json;
  while ((p = strchr(p, '"')) != NULL) {
    if (strncmp(p + 1, key, klen) == 0 && p[1 + klen] == '"') {
      const char *q = p + 2 + klen;
      while (*q == ' ' || *q == '\t' || *q == '\n' || *q == '\r') q++;
      if (*q != ':') { p++; continue; }
      q++;
      while (*q == ' ' || *q == '\t' || *q == '\n' || *q == '\r') q++;
      if (*q != '"') return 0;
      q++;
      size_t n = 0;
      while (*q && *q != '"' && n + 4 < cap) {
        if (*q != '\\') { out[n++] = *q++; continue; }
        q++;
        switch (*q) {
          case 'n': out[n++] = '\n'; q++; break;
          case 't': out[n++] = '\t'; q++; break;
          case 'r': out[n++] = '\r'; q++; break;
          case 'b': out[n++] = '\b'; q++; break;
          case 'f': out[n++] = '\f'; q++; break;
          case 'u': {
            unsigned code = 0;
            int ok = 1;
            for (int i = 1; i <= 4; i++) {
              char h = q[i];
              code <<= 4;
              if (h >= '0' && h <= '9') code |= (unsigned)(h - '0');
              else if (h >= 'a' && h <= 'f') code |= (unsigned)(h - 'a' + 10);
              else if (h >= 'A' && h <= 'F') code |= (unsigned)(h - 'A' + 10);
              else { ok = 0; break; }
            }
            if (!ok) return 0;
            q += 5;
            if (code < 0x80) out[n++] = (char)code;
            else if (code < 0x800) { out[n++] = (char)(0xC0 | (code >> 6)); out[n++] = (char)(0x80 | (code & 0x3F)); }
            else { out[n++] = (char)(0xE0 | (code >> 12)); out[n++] = (char)(0x80 | ((code >> 6) & 0x3F)); out[n++] = (char)(0x80 | (code & 0x3F)); }
            break;
          }
          case '\0': break;
          default: out[n++] = *q++; break; /* \" \\ \/ */
        }
      }
      out[n] = '\0';
      return 1;
    }
    p++;
  }
  return 0;
}

/* Puts the problem+json of a refused request into the error message. */
static void fw_set_problem(fw_client *c, const char *body) {
  char type[256] = "", title[512] = "", detail[1400] = "";
  if (body) {
    fw_json_string(body, "type", type, sizeof type);
    fw_json_string(body, "title", title, sizeof title);
    fw_json_string(body, "detail", detail, sizeof detail);
  }
  const char *kind = strrchr(type, '/') ? strrchr(type, '/') + 1 : type;
  if (title[0] || detail[0]) {
    snprintf(c->error, sizeof c->error, "HTTP %ld %s: %s%s%s", c->http_status, kind[0] ? kind : "error", title,
             title[0] && detail[0] ? " — " : "", detail);
  } else {
    snprintf(c->error, sizeof c->error, "HTTP %ld with no problem details", c->http_status);
  }
}

static void fw_sleep_seconds(long seconds) {
  struct timespec ts = {seconds, 0};
  nanosleep(&ts, NULL);
}

/* POSTs a body; on return c->http_status and the headers are set and *answer holds the body. */
static int fw_post(fw_client *c, const char *url, const char *content_type, const void *body, size_t bytes,
                   struct fw_buffer *answer) {
  char content_header[128];
  snprintf(content_header, sizeof content_header, "Content-Type: %s", content_type);
  for (int attempt = 0;; attempt++) {
    struct curl_slist *headers = NULL;
    headers = curl_slist_append(headers, c->auth_header);
    headers = curl_slist_append(headers, content_header);
    headers = curl_slist_append(headers, "Accept: application/octet-stream, application/json, application/problem+json");
    headers = curl_slist_append(headers, "Expect:"); /* no 100-continue round trip for large bodies */
    answer->size = 0;
    c->meta[0] = c->layout[0] = c->content_type[0] = '\0';
    c->retry_after = -1;
    c->http_status = 0;
    curl_easy_setopt(c->curl, CURLOPT_URL, url);
    curl_easy_setopt(c->curl, CURLOPT_HTTPHEADER, headers);
    curl_easy_setopt(c->curl, CURLOPT_POST, 1L);
    curl_easy_setopt(c->curl, CURLOPT_POSTFIELDS, body);
    curl_easy_setopt(c->curl, CURLOPT_POSTFIELDSIZE_LARGE, (curl_off_t)bytes);
    curl_easy_setopt(c->curl, CURLOPT_WRITEFUNCTION, fw_on_body);
    curl_easy_setopt(c->curl, CURLOPT_WRITEDATA, answer);
    curl_easy_setopt(c->curl, CURLOPT_HEADERFUNCTION, fw_on_header);
    curl_easy_setopt(c->curl, CURLOPT_HEADERDATA, c);
    CURLcode rc = curl_easy_perform(c->curl);
    curl_slist_free_all(headers);
    if (rc != CURLE_OK) {
      snprintf(c->error, sizeof c->error, "no answer from %s: %s", url, curl_easy_strerror(rc));
      return FW_ERR_TRANSPORT;
    }
    curl_easy_getinfo(c->curl, CURLINFO_RESPONSE_CODE, &c->http_status);
    if (answer->data == NULL && !fw_buffer_append(answer, "", 0)) return FW_ERR_MEMORY;
    /* A per-second rate limit or a busy gateway passes: wait as told and try again. The monthly
       quota (429 quota-exceeded) does not pass by waiting a second, so it is reported at once. */
    int busy = c->http_status == 503 || (c->http_status == 429 && strstr(answer->data, "rate-limited") != NULL);
    if (busy && attempt < FW_MAX_RETRIES && c->retry_after >= 0 && c->retry_after <= 60) {
      fw_sleep_seconds(c->retry_after > 0 ? c->retry_after : 1);
      continue;
    }
    if (c->http_status >= 400) {
      fw_set_problem(c, answer->data);
      return FW_ERR_HTTP;
    }
    return FW_OK;
  }
}

/* ---------------------------------------------------------------------------------------------- */
/* public interface                                                                                 */

fw_client *fw_open(const char *base_url, const char *api_key) {
  static int curl_ready = 0;
  if (!curl_ready) {
    if (curl_global_init(CURL_GLOBAL_DEFAULT) != CURLE_OK) return NULL;
    curl_ready = 1;
  }
  if (!base_url || !*base_url) base_url = getenv("FERMIWELL_URL");
  if (!base_url || !*base_url) base_url = FW_DEFAULT_URL;
  if (!api_key || !*api_key) api_key = getenv("FERMIWELL_KEY");
  if (!api_key || !*api_key) return NULL;

  fw_client *c = calloc(1, sizeof *c);
  if (!c) return NULL;
  c->curl = curl_easy_init();
  c->base_url = fw_strdup(base_url);
  size_t auth_len = strlen(api_key) + 32;
  c->auth_header = malloc(auth_len);
  if (!c->curl || !c->base_url || !c->auth_header) {
    fw_close(c);
    return NULL;
  }
  size_t len = strlen(c->base_url);
  while (len > 0 && c->base_url[len - 1] == '/') c->base_url[--len] = '\0';
  snprintf(c->auth_header, auth_len, "Authorization: Bearer %s", api_key);
  curl_easy_setopt(c->curl, CURLOPT_NOSIGNAL, 1L);
  curl_easy_setopt(c->curl, CURLOPT_CONNECTTIMEOUT, 10L);
  curl_easy_setopt(c->curl, CURLOPT_TIMEOUT, 600L);
  curl_easy_setopt(c->curl, CURLOPT_USERAGENT, "fermiwell-c-example/1.0");
  return c;
}

void fw_close(fw_client *c) {
  if (!c) return;
  if (c->curl) curl_easy_cleanup(c->curl);
  free(c->base_url);
  free(c->auth_header);
  free(c);
}

int fw_call(fw_client *c, const char *operation, const char *inputs, const char *options, size_t n, const double *in,
            const char *fields, double *out, int *status) {
  if (!c) return FW_ERR_ARGUMENT;
  c->error[0] = '\0';
  size_t k = fw_count_items(inputs), m = fw_count_items(fields);
  if (!operation || k == 0 || m == 0 || n == 0 || !in || !out) {
    snprintf(c->error, sizeof c->error, "fw_call needs an operation, inputs, fields, n > 0 and the arrays");
    return FW_ERR_ARGUMENT;
  }
  size_t url_len = strlen(c->base_url) + strlen(operation) + strlen(inputs) + strlen(fields) +
                   (options ? strlen(options) : 0) + 64;
  char *url = malloc(url_len);
  unsigned char *body = malloc(8 * n * k);
  struct fw_buffer answer = {0};
  int rc = FW_ERR_MEMORY;
  if (!url || !body) goto done;
  snprintf(url, url_len, "%s/v1/eos/%s?inputs=%s&fields=%s%s%s", c->base_url, operation, inputs, fields,
           options && *options ? "&" : "", options ? options : "");
  fw_copy_le(body, in, n * k);

  rc = fw_post(c, url, "application/octet-stream", body, 8 * n * k, &answer);
  if (rc != FW_OK) goto done;

  /* The answer must be the fields asked for, then the status column: check the layout header. */
  size_t expected_len = strlen(fields) + 64;
  char *expected = malloc(expected_len);
  if (!expected) goto done;
  snprintf(expected, expected_len, "float64-le; points=%zu; columns=\"%s,status\"", n, fields);
  int layout_ok = answer.size == 8 * n * (m + 1) && strcmp(c->layout, expected) == 0;
  if (!layout_ok) {
    snprintf(c->error, sizeof c->error, "unexpected answer layout: got %zu bytes and layout '%.500s', expected %zu bytes and '%.500s'",
             answer.size, c->layout, 8 * n * (m + 1), expected);
  }
  free(expected);
  if (!layout_ok) {
    rc = FW_ERR_LAYOUT;
    goto done;
  }
  fw_copy_le(out, answer.data, n * m);
  if (status) {
    const unsigned char *col = (const unsigned char *)answer.data + 8 * n * m;
    for (size_t i = 0; i < n; i++) {
      double code;
      fw_copy_le(&code, col + 8 * i, 1);
      status[i] = (int)code;
    }
  }
  rc = FW_OK;
done:
  if (rc == FW_ERR_MEMORY) snprintf(c->error, sizeof c->error, "out of memory for %zu points", n);
  free(url);
  free(body);
  free(answer.data);
  return rc;
}

int fw_evaluate(fw_client *c, const char *options, size_t n, const double *density, const double *temperature,
                const char *fields, double *out, int *status) {
  if (!density || !temperature || n == 0) return FW_ERR_ARGUMENT;
  double *in = malloc(2 * n * sizeof *in);
  if (!in) return FW_ERR_MEMORY;
  memcpy(in, density, n * sizeof *in);
  memcpy(in + n, temperature, n * sizeof *in);
  int rc = fw_call(c, "evaluate", "density,temperature", options, n, in, fields, out, status);
  free(in);
  return rc;
}

int fw_invert(fw_client *c, const char *options, const char *given, size_t n, const double *first, const double *second,
              const char *fields, double *out, int *status) {
  if (!first || !second || n == 0 || fw_count_items(given) != 2) return FW_ERR_ARGUMENT;
  double *in = malloc(2 * n * sizeof *in);
  if (!in) return FW_ERR_MEMORY;
  memcpy(in, first, n * sizeof *in);
  memcpy(in + n, second, n * sizeof *in);
  int rc = fw_call(c, "invert", given, options, n, in, fields, out, status);
  free(in);
  return rc;
}

int fw_post_json(fw_client *c, const char *path, const char *json_body, char **response) {
  if (!c || !path || !json_body || !response) return FW_ERR_ARGUMENT;
  *response = NULL;
  c->error[0] = '\0';
  size_t url_len = strlen(c->base_url) + strlen(path) + 1;
  char *url = malloc(url_len);
  if (!url) return FW_ERR_MEMORY;
  snprintf(url, url_len, "%s%s", c->base_url, path);
  struct fw_buffer answer = {0};
  int rc = fw_post(c, url, "application/json", json_body, strlen(json_body), &answer);
  free(url);
  *response = answer.data; /* the problem body too, on FW_ERR_HTTP */
  return rc;
}

void fw_free(void *pointer) { free(pointer); }

const char *fw_error_message(const fw_client *c) { return c ? c->error : "no client (fw_open failed: no key?)"; }

long fw_http_status(const fw_client *c) { return c ? c->http_status : 0; }

const char *fw_last_meta(const fw_client *c) { return c ? c->meta : ""; }

const char *fw_status_name(int code) {
  switch (code) {
    case 0: return "OK";
    case 1: return "INVALID_NUMBER";
    case 2: return "DENSITY_NOT_POSITIVE";
    case 3: return "DENSITY_OUT_OF_RANGE";
    case 4: return "TEMPERATURE_OUT_OF_RANGE";
    case 5: return "COMPOSITION_OUT_OF_DOMAIN";
    case 6: return "MASS_FRACTIONS_INVALID";
    case 7: return "PAIR_SOLVER_FAILED";
    case 8: return "TABLE_OUT_OF_RANGE";
    case 10: return "TARGET_INVALID";
    case 11: return "NO_SOLUTION_BELOW_DOMAIN";
    case 12: return "NO_SOLUTION_ABOVE_DOMAIN";
    case 13: return "NOT_CONVERGED";
    case 14: return "NOT_MONOTONE";
    case 20: return "NON_FINITE_OUTPUT";
    default: return "UNKNOWN_STATUS";
  }
}
