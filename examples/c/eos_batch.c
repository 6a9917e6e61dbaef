/*
 * eos_batch.c — what a hydro code does with Fermiwell, in C:
 *   1. evaluate a batch of zones at (density, temperature) through the binary form;
 *   2. invert a batch at (density, specific energy) for the temperature, as after an energy update;
 *   3. show how problems surface: per-point statuses, and a refused request's problem+json detail.
 *
 * Build: make -C examples/c        Run: FERMIWELL_URL=http://127.0.0.1:8080 FERMIWELL_KEY=fwk_… ./eos_batch
 * Output: '#' comment lines, then whitespace-separated rows (easy to read back in any language).
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include "fermiwell.h"

#define N 6
#define COMPOSITION "mixture=c12-o16" /* C12 0.5, O16 0.5 by mass: a carbon–oxygen white dwarf */

int main(void) {
  fw_client *client = fw_open(NULL, NULL); /* FERMIWELL_URL and FERMIWELL_KEY from the environment */
  if (!client) {
    fprintf(stderr, "set FERMIWELL_KEY to an API key (fwk_…) and FERMIWELL_URL to the gateway\n");
    return 1;
  }

  /* Six zones of a degenerate C/O core and its envelope; the last temperature is outside the
     model's domain [1e3, 1e13] K on purpose, to show a per-point status. */
  const double density[N] = {1.0e2, 1.0e4, 1.0e6, 1.0e7, 1.0e9, 1.0e7};
  const double temperature[N] = {1.0e6, 1.0e7, 1.0e8, 3.0e8, 1.0e9, 1.0e14};
  double state[3 * N];
  int status[N];

  int rc = fw_evaluate(client, COMPOSITION "&method=exact", N, density, temperature, "pressure,specificEnergy,gamma1",
                       state, status);
  if (rc != FW_OK) {
    fprintf(stderr, "evaluate failed: %s\n", fw_error_message(client));
    fw_close(client);
    return 2;
  }
  const double *pressure = state, *energy = state + N, *gamma1 = state + 2 * N;
  printf("# evaluate: %d C/O zones (%s), binary form\n", N, COMPOSITION);
  printf("# meta: %s\n", fw_last_meta(client));
  printf("# i density[g/cm3] temperature[K] pressure[erg/cm3] specificEnergy[erg/g] gamma1 status\n");
  for (int i = 0; i < N; i++) {
    printf("evaluate %d %.17e %.17e %.17e %.17e %.17e %d %s\n", i, density[i], temperature[i], pressure[i], energy[i],
           gamma1[i], status[i], fw_status_name(status[i]));
  }

  /* The hydro step: only the zones that were computed, temperature back from (density, energy). */
  double rho[N], e[N], t_given[N];
  size_t m = 0;
  for (int i = 0; i < N; i++) {
    if (status[i] != 0) continue;
    rho[m] = density[i];
    e[m] = energy[i];
    t_given[m] = temperature[i];
    m++;
  }
  double solved[3 * N];
  int inv_status[N];
  rc = fw_invert(client, COMPOSITION, "density,specificEnergy", m, rho, e, "temperature,pressure,iterations", solved,
                 inv_status);
  if (rc != FW_OK) {
    fprintf(stderr, "invert failed: %s\n", fw_error_message(client));
    fw_close(client);
    return 2;
  }
  printf("# invert density,specificEnergy -> temperature (the round trip of the computed zones)\n");
  printf("# i density[g/cm3] specificEnergy[erg/g] temperature[K] temperatureGiven[K] relativeDifference iterations status\n");
  double worst = 0;
  for (size_t i = 0; i < m; i++) {
    double t = solved[i], diff = fabs(t - t_given[i]) / t_given[i];
    if (inv_status[i] == 0 && diff > worst) worst = diff;
    printf("invert %zu %.17e %.17e %.17e %.17e %.3e %.0f %d %s\n", i, rho[i], e[i], t, t_given[i], diff,
           solved[2 * m + i], inv_status[i], fw_status_name(inv_status[i]));
  }
  printf("# largest round-trip difference: %.3e\n", worst);

  /* A refused request: a field the API does not have. The gateway answers 400 with a
     problem+json body; the client puts its title and detail into fw_error_message(). */
  double scratch[N];
  rc = fw_evaluate(client, COMPOSITION, 1, density, temperature, "presure", scratch, status);
  printf("# a misspelt field name, to show a refused request:\n");
  printf("refused rc=%d http=%ld %s\n", rc, fw_http_status(client), fw_error_message(client));

  fw_close(client);
  return 0;
}
