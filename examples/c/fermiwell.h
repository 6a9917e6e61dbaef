/*
 * fermiwell.h — a small C client for the Fermiwell equation-of-state API (libcurl).
 *
 * It speaks the binary form of POST /v1/eos/evaluate, /v1/eos/invert and /v1/eos/regime
 * (schema/openapi.yaml, "The binary form"): the request body is the input columns one after
 * another, n little-endian float64 values each; the answer is the requested field columns and then
 * one status column, n little-endian float64 values each. Arrays here are column-major, so a
 * Fortran array in(n, k) is exactly a request body.
 *
 * Errors: every call returns FW_OK (0) or a negative FW_ERR_* code; fw_error_message() then says
 * what went wrong in words — for a refused request (4xx/5xx) the problem+json `title` and `detail`
 * the gateway sent, e.g. "HTTP 413 batch-too-large: Batch larger than the plan allows — This batch
 * has 20000 points; ...". Per-point problems (a density outside the domain, an inversion that did
 * not converge) are not errors of the call: they come back in the status array, one code per point
 * (0 = computed; fw_status_name() names the others, see PointStatus in the OpenAPI document).
 *
 * Build: cc -c fermiwell.c $(curl-config --cflags); link with -lcurl.
 */
#ifndef FERMIWELL_H
#define FERMIWELL_H

#include <stddef.h>

#ifdef __cplusplus
extern "C" {
#endif

enum {
  FW_OK = 0,
  FW_ERR_ARGUMENT = -1,  /* a bad argument (NULL pointer, n = 0, empty field list, ...) */
  FW_ERR_MEMORY = -2,    /* out of memory */
  FW_ERR_TRANSPORT = -3, /* the request did not get an HTTP answer (connection refused, timeout) */
  FW_ERR_HTTP = -4,      /* the gateway refused or failed the request: see fw_error_message() */
  FW_ERR_LAYOUT = -5     /* the answer's layout is not the one asked for */
};

typedef struct fw_client fw_client;

/*
 * Opens a client. base_url like "http://127.0.0.1:8080" (NULL: $FERMIWELL_URL, else that
 * default); api_key "fwk_…" (NULL: $FERMIWELL_KEY). Returns NULL only when out of memory or when
 * no key is given at all; the key is not checked until the first call.
 */
fw_client *fw_open(const char *base_url, const char *api_key);
void fw_close(fw_client *client);

/*
 * The general call. operation: "evaluate", "invert" or "regime". inputs: the body's columns,
 * comma-separated (e.g. "density,temperature" or "density,specificEnergy"). options: further
 * query parameters of the binary form, already URL-safe, e.g.
 * "mixture=c12-o16&components=electrons,positrons&method=exact" (may be NULL or "").
 * in: n * (number of inputs) values, column after column. fields: the output columns,
 * comma-separated. out: room for n * (number of fields) values, column after column.
 * status: room for n codes (may be NULL if you do not want them — not recommended).
 */
int fw_call(fw_client *client, const char *operation, const char *inputs, const char *options, size_t n,
            const double *in, const char *fields, double *out, int *status);

/* Forward evaluation at (density, temperature): out holds the fields, column after column. */
int fw_evaluate(fw_client *client, const char *options, size_t n, const double *density,
                const double *temperature, const char *fields, double *out, int *status);

/*
 * Inversion from two given variables, e.g. given = "density,specificEnergy" (temperature from
 * density and energy, what a hydro code needs every step) or "pressure,temperature".
 */
int fw_invert(fw_client *client, const char *options, const char *given, size_t n, const double *first,
              const double *second, const char *fields, double *out, int *status);

/*
 * POST a JSON body to a path (e.g. "/v1/eos/evaluate") and return the JSON answer in *response
 * (malloc'ed, NUL-terminated; free it with fw_free). A 4xx/5xx answer returns FW_ERR_HTTP with
 * the problem in fw_error_message() and the problem body in *response.
 */
int fw_post_json(fw_client *client, const char *path, const char *json_body, char **response);
void fw_free(void *pointer);

/* The last error in words ("" after a successful call). Valid until the next call. */
const char *fw_error_message(const fw_client *client);
/* The HTTP status of the last call (0 when there was no answer). */
long fw_http_status(const fw_client *client);
/* The last answer's meta (binary form: the Fermiwell-Meta header, one line of JSON), or "". */
const char *fw_last_meta(const fw_client *client);

/* The name of a per-point status code, e.g. 4 -> "TEMPERATURE_OUT_OF_RANGE". */
const char *fw_status_name(int code);

#ifdef __cplusplus
}
#endif

#endif /* FERMIWELL_H */
