curl -sS --fail-with-body -X POST 'http://127.0.0.1:8080/v1/eos/evaluate' \
  -H "Authorization: Bearer $FERMIWELL_KEY" \
  -H 'Content-Type: application/json' \
  --data-binary '{"density":[1000000,10000000],"temperature":100000000,"composition":{"mixture":"c12-o16"},"fields":["pressure","specificEnergy","gamma1"]}'
