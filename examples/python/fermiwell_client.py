"""A small Python client for the Fermiwell equation-of-state API, for analysis scripts.

Standard library only (urllib, array, json); when NumPy is importable the columns come back as
NumPy arrays, otherwise as array('d') columns — the numbers are the same.

    from fermiwell_client import Client, FermiwellError
    fw = Client()                      # FERMIWELL_URL and FERMIWELL_KEY from the environment
    out = fw.evaluate(density=[1e6, 1e7], temperature=[1e8, 1e8],
                      fields=["pressure", "gamma1"], mixture="c12-o16")
    out["pressure"], out["status"]     # one value per point; status 0 = computed
    back = fw.invert({"density": [1e6], "specificEnergy": [1e17]},
                     fields=["temperature"], mixture="c12-o16")

The evaluate/invert calls use the binary form (schema/openapi.yaml, "The binary form"):
little-endian float64 columns one after another, the layout named in the query; the answer is the
requested columns and then the per-point status column. A refused request raises FermiwellError
carrying the problem+json `type`, `title` and `detail`.
"""

import json
import os
import sys
import urllib.error
import urllib.parse
import urllib.request
from array import array

try:  # optional: NumPy arrays out when present (Debian: python3-numpy)
    import numpy
except ImportError:  # pragma: no cover - depends on the machine
    numpy = None

DEFAULT_URL = "http://127.0.0.1:8080"

STATUS_NAMES = {
    0: "OK", 1: "INVALID_NUMBER", 2: "DENSITY_NOT_POSITIVE", 3: "DENSITY_OUT_OF_RANGE",
    4: "TEMPERATURE_OUT_OF_RANGE", 5: "COMPOSITION_OUT_OF_DOMAIN", 6: "MASS_FRACTIONS_INVALID",
    7: "PAIR_SOLVER_FAILED", 8: "TABLE_OUT_OF_RANGE", 10: "TARGET_INVALID",
    11: "NO_SOLUTION_BELOW_DOMAIN", 12: "NO_SOLUTION_ABOVE_DOMAIN", 13: "NOT_CONVERGED",
    14: "NOT_MONOTONE", 20: "NON_FINITE_OUTPUT",
}


class FermiwellError(Exception):
    """A refused or failed request, with the gateway's problem+json fields."""

    def __init__(self, status, problem):
        self.status = status
        self.problem = problem if isinstance(problem, dict) else {}
        self.kind = str(self.problem.get("type", "")).rsplit("/", 1)[-1]
        self.title = self.problem.get("title", "")
        self.detail = self.problem.get("detail", "")
        super().__init__(f"HTTP {status} {self.kind}: {self.title} — {self.detail}")


def _le_bytes(values):
    column = array("d", values)
    if sys.byteorder == "big":
        column.byteswap()
    return column.tobytes()


def _columns_from(body, names, n):
    all_values = array("d")
    all_values.frombytes(body)
    if sys.byteorder == "big":
        all_values.byteswap()
    out = {}
    for j, name in enumerate(names):
        column = all_values[j * n:(j + 1) * n]
        out[name] = numpy.asarray(column, dtype=numpy.float64) if numpy is not None else column
    return out


class Client:
    def __init__(self, base_url=None, key=None, timeout=120):
        self.base_url = (base_url or os.environ.get("FERMIWELL_URL") or DEFAULT_URL).rstrip("/")
        self.key = key or os.environ.get("FERMIWELL_KEY")
        if not self.key:
            raise ValueError("no API key: set FERMIWELL_KEY (fwk_...) or pass key=")
        self.timeout = timeout
        self.last_meta = None

    def _post(self, path, body, content_type):
        request = urllib.request.Request(
            self.base_url + path,
            data=body,
            method="POST",
            headers={"Authorization": "Bearer " + self.key, "Content-Type": content_type},
        )
        try:
            with urllib.request.urlopen(request, timeout=self.timeout) as response:
                return response.read(), response.headers
        except urllib.error.HTTPError as error:
            text = error.read()
            try:
                problem = json.loads(text)
            except ValueError:
                problem = {"title": text.decode("utf-8", "replace")[:500]}
            raise FermiwellError(error.code, problem) from None

    def post_json(self, path, body):
        """POST a JSON body (e.g. to /v1/eos/evaluate) and return the decoded JSON answer."""
        text, _ = self._post(path, json.dumps(body).encode("utf-8"), "application/json")
        return json.loads(text)

    def call(self, operation, inputs, fields, **options):
        """The binary form of evaluate/invert/regime: inputs is {column name: values}."""
        names = list(inputs)
        columns = [list(inputs[name]) for name in names]
        n = len(columns[0])
        if n == 0 or any(len(c) != n for c in columns):
            raise ValueError("every input column needs the same, positive length")
        query = {"inputs": ",".join(names), "fields": ",".join(fields)}
        query.update({k: ",".join(v) if isinstance(v, (list, tuple)) else str(v) for k, v in options.items()})
        path = f"/v1/eos/{operation}?" + urllib.parse.urlencode(query, safe=",")
        body, headers = self._post(path, b"".join(_le_bytes(c) for c in columns), "application/octet-stream")
        self.last_meta = json.loads(headers.get("Fermiwell-Meta", "null"))
        layout = headers.get("Fermiwell-Layout", "")
        expected = f'float64-le; points={n}; columns="{",".join(list(fields) + ["status"])}"'
        if layout != expected or len(body) != 8 * n * (len(fields) + 1):
            raise ValueError(f"unexpected answer layout {layout!r} ({len(body)} bytes); expected {expected!r}")
        out = _columns_from(body, list(fields) + ["status"], n)
        out["status"] = [int(s) for s in out["status"]]
        return out

    def evaluate(self, density, temperature, fields, **options):
        """Forward evaluation; options are the binary form's query parameters (mixture, components, ...)."""
        return self.call("evaluate", {"density": density, "temperature": temperature}, fields, **options)

    def invert(self, given, fields, **options):
        """Inversion from two given columns, e.g. {"density": [...], "specificEnergy": [...]}."""
        return self.call("invert", given, fields, **options)
