/* cc request.c -lcurl -o request && ./request */
#include <curl/curl.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static const char *URL = "http://127.0.0.1:8080/v1/eos/evaluate";
static const char *BODY =
  "{\n"
  "  \"density\": [\n"
  "    1000000,\n"
  "    10000000\n"
  "  ],\n"
  "  \"temperature\": 100000000,\n"
  "  \"composition\": {\n"
  "    \"mixture\": \"c12-o16\"\n"
  "  },\n"
  "  \"fields\": [\n"
  "    \"pressure\",\n"
  "    \"specificEnergy\",\n"
  "    \"gamma1\"\n"
  "  ]\n"
  "}";

/* collects the answer: the JSON result, or an RFC 9457 problem+json on a 4xx/5xx */
static size_t collect(char *data, size_t size, size_t count, void *user) {
  char **text = user;
  size_t old = *text ? strlen(*text) : 0, add = size * count;
  char *grown = realloc(*text, old + add + 1);
  if (!grown) return 0;
  memcpy(grown + old, data, add);
  grown[old + add] = '\0';
  *text = grown;
  return add;
}

int main(void) {
  const char *key = getenv("FERMIWELL_KEY");
  if (!key) { fprintf(stderr, "set FERMIWELL_KEY\n"); return 1; }
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
  if (rc != CURLE_OK) { fprintf(stderr, "%s\n", curl_easy_strerror(rc)); return 1; }
  /* 200: the result; otherwise the problem, whose "detail" says what to change */
  fprintf(status == 200 ? stdout : stderr, "%s\n", answer ? answer : "");
  free(answer);
  return status == 200 ? 0 : 2;
}
