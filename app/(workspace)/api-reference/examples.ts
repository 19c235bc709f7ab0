/** What the examples are filled with: the reader's chosen model version and a wavefront within its Zernike set. */
export interface ExampleTarget {
  baseUrl: string;
  slug: string;
  version: number;
  /** Noll index -> nm RMS, only terms of the model's set. */
  coefficientsNm: Record<string, number>;
}

/** A wavefront for the examples: defocus and spherical when the set has them, else its first two terms. */
export function exampleCoefficients(nollIndices: readonly number[]): Record<string, number> {
  const wanted = nollIndices.includes(4) && nollIndices.includes(11) ? [4, 11] : nollIndices.slice(0, 2);
  const values = [3.2, -1.5];
  return Object.fromEntries(wanted.map((j, i) => [String(j), values[i]]));
}

const evaluateBody = (t: ExampleTarget) => ({ wavefronts: [{ ordering: "noll", coefficientsNm: t.coefficientsNm }], output: "map", jitterNrad: 8 });
const pyDict = (record: Record<string, number>) => `{${Object.entries(record).map(([k, v]) => `${k}: ${v}`).join(", ")}}`;

export function curlExample(t: ExampleTarget): string {
  const v = `${t.baseUrl}/api/v1/models/${t.slug}/versions/${t.version}`;
  return `# The token from the tokens page (shown once), e.g. in your shell's environment:
export STILLPOINT_TOKEN='stp_...'

# List the models you may read, with their latest released version
curl -sS -w '\\n' -H "Authorization: Bearer $STILLPOINT_TOKEN" "${t.baseUrl}/api/v1/models"

# Evaluate a wavefront (nm RMS by Noll index) on ${t.slug} v${t.version}: both TTL maps, the peak, 8 nrad jitter noise
curl -sS -w '\\n' -X POST "${v}/evaluate" \\
  -H "Authorization: Bearer $STILLPOINT_TOKEN" \\
  -H "Content-Type: application/json" \\
  -d '${JSON.stringify(evaluateBody(t))}'

# Download the coefficients as NumPy's .npz (saved as ${t.slug}-v${t.version}.npz)
curl -sS -f -O -J -H "Authorization: Bearer $STILLPOINT_TOKEN" "${v}/coefficients?format=npz"
`;
}

export function pythonExample(t: ExampleTarget): string {
  return `import io
import json
import os

import numpy as np
import requests

BASE = "${t.baseUrl}/api/v1"
SLUG, VERSION = "${t.slug}", ${t.version}
session = requests.Session()
session.headers["Authorization"] = f"Bearer {os.environ['STILLPOINT_TOKEN']}"

# List the models you may read
models = session.get(f"{BASE}/models", timeout=30)
models.raise_for_status()
for model in models.json()["items"]:
    print(model["slug"], "latest released:", model["latestReleasedVersion"])

# Evaluate a wavefront (nm RMS by Noll index) on the pinned version
wavefront_nm = ${pyDict(t.coefficientsNm)}
answer = session.post(
    f"{BASE}/models/{SLUG}/versions/{VERSION}/evaluate",
    json={"wavefronts": [{"ordering": "noll", "coefficientsNm": {str(j): a for j, a in wavefront_nm.items()}}],
          "output": "map", "jitterNrad": 8},
    timeout=30,
)
answer.raise_for_status()
evaluated = answer.json()
result = evaluated["results"][0]
c_x = np.array(result["ttlXPmPerNrad"])  # [iy][ix], pm/nrad
print("peak", result["peakAbsTtlPmPerNrad"], "pm/nrad at", result["peakAt"])
print("length noise", result["peakLengthNoisePm"], "pm; in range:", result["validity"]["inRange"])
print(evaluated["notice"])

# Download the coefficients (.npz) and evaluate the same map with NumPy alone
npz = session.get(f"{BASE}/models/{SLUG}/versions/{VERSION}/coefficients", params={"format": "npz"}, timeout=120)
npz.raise_for_status()
with np.load(io.BytesIO(npz.content)) as archive:
    theta = archive["theta_nrad"]            # (M,) node angles, nrad
    terms = archive["terms"]                 # (T, 2) Noll indices of each term's factors, 0 where absent
    coefficients_x = archive["coefficients_x"].astype(np.float64)  # (T, M, M) pm/nrad per nm^degree
    metadata = json.loads(archive["metadata.json"])
# c[iy][ix] = sum_t coefficients[t][iy][ix] * prod(a[f] for f in terms[t] if f != 0)
weights = np.array([np.prod([wavefront_nm.get(int(f), 0.0) for f in term if f != 0]) for term in terms])
numpy_c_x = np.tensordot(weights, coefficients_x, axes=1)
print("NumPy map vs the API's: largest difference", np.abs(numpy_c_x - c_x).max(), "pm/nrad")
print(metadata["notice"])
`;
}

export function typescriptExample(t: ExampleTarget): string {
  return `// Node 20+ (or any browser-like runtime with fetch); save as stillpoint.mts and run with \`npx tsx stillpoint.mts\`
const BASE = "${t.baseUrl}/api/v1";
const SLUG = "${t.slug}";
const VERSION = ${t.version};
const headers = { Authorization: \`Bearer \${process.env.STILLPOINT_TOKEN}\` };

async function json<T>(response: Response): Promise<T> {
  if (!response.ok) {
    const problem = await response.json().catch(() => ({}));
    throw new Error(\`\${response.status} \${problem.title ?? ""}: \${problem.detail ?? ""}\`);
  }
  return (await response.json()) as T;
}

// List the models you may read
const models = await json<{ items: { slug: string; latestReleasedVersion: number | null }[] }>(
  await fetch(\`\${BASE}/models\`, { headers }),
);
for (const model of models.items) console.log(model.slug, "latest released:", model.latestReleasedVersion);

// Evaluate a wavefront (nm RMS by Noll index) on the pinned version
const evaluated = await json<{
  results: { ttlXPmPerNrad: number[][]; ttlYPmPerNrad: number[][]; peakAbsTtlPmPerNrad: number; peakLengthNoisePm: number;
    validity: { inRange: boolean; warnings: string[] } }[];
  notice: string;
}>(
  await fetch(\`\${BASE}/models/\${SLUG}/versions/\${VERSION}/evaluate\`, {
    method: "POST",
    headers: { ...headers, "Content-Type": "application/json" },
    body: JSON.stringify(${JSON.stringify(evaluateBody(t))}),
  }),
);
const [result] = evaluated.results;
console.log("peak", result.peakAbsTtlPmPerNrad, "pm/nrad; length noise", result.peakLengthNoisePm, "pm; in range:", result.validity.inRange);
console.log(evaluated.notice);

// Download the coefficients as .npz (open it with numpy.load)
const npz = await fetch(\`\${BASE}/models/\${SLUG}/versions/\${VERSION}/coefficients?format=npz\`, { headers });
if (!npz.ok) throw new Error(\`download failed: \${npz.status}\`);
const bytes = new Uint8Array(await npz.arrayBuffer());
console.log(\`\${bytes.length} bytes, \${npz.headers.get("content-disposition")}\`);
`;
}
