import json
import os
import urllib.error
import urllib.request

URL = "http://127.0.0.1:8080/v1/eos/evaluate"
payload = json.loads(r"""{
  "density": [
    1000000,
    10000000
  ],
  "temperature": 100000000,
  "composition": {
    "mixture": "c12-o16"
  },
  "fields": [
    "pressure",
    "specificEnergy",
    "gamma1"
  ]
}""")

request = urllib.request.Request(
    URL,
    data=json.dumps(payload).encode("utf-8"),
    method="POST",
    headers={
        "Authorization": "Bearer " + os.environ["FERMIWELL_KEY"],
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
