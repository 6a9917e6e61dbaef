const url = 'http://127.0.0.1:8080/v1/eos/evaluate';
const body = {
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
};

const response = await fetch(url, {
  method: 'POST',
  headers: {
    Authorization: `Bearer ${process.env['FERMIWELL_KEY']}`,
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
if (!response.ok) throw new Error(`${response.status}: ${result.detail ?? result.title}`);
console.log(result.values, result.status, result.warnings);
