/** Copy-paste examples for an acquisition PC, filled in with this server's origin. */

const META = {
	laser_nm: 532,
	modes: [520.7],
	exposure_stokes_s: 1,
	exposure_anti_stokes_s: 4,
	dark_counts: 300,
	c_factor: 1,
	u_c_factor: 0.02,
	label: 'spot A'
};

export function curlUpload(origin: string) {
	return `export PHONOTHERM_TOKEN=pt_…   # from the project's "Acquisition tokens" page

curl -sS -X POST ${origin}/api/v1/measurements \\
  -H "Authorization: Bearer $PHONOTHERM_TOKEN" \\
  -H "Idempotency-Key: $(uuidgen)" \\
  -F stokes=@si-532-stokes.csv \\
  -F anti_stokes=@si-532-anti-stokes.csv \\
  -F 'metadata={"laser_nm":532,"modes":[520.7],"exposure_stokes_s":1,"exposure_anti_stokes_s":4,
              "dark_counts":300,"c_factor":1,"u_c_factor":0.02,"label":"spot A"};type=application/json'`;
}

export function curlProfiles(origin: string) {
	return `# Set the instrument up once on the Instruments page; then name it instead of laser, detector and C.
curl -sS -H "Authorization: Bearer $PHONOTHERM_TOKEN" ${origin}/api/v1/profiles
# → {"profiles":[{"id":1,"name":"Confocal bench 532","version":1,"laser_nm":532, …,
#                 "calibrations":[{"id":2,"method":"lamp","c":1.0001,"u_c":0.008, …}]}]}

curl -sS -X POST ${origin}/api/v1/measurements \\
  -H "Authorization: Bearer $PHONOTHERM_TOKEN" -H "Idempotency-Key: $(uuidgen)" \\
  -F stokes=@si-532-stokes.csv -F anti_stokes=@si-532-anti-stokes.csv \\
  -F 'metadata={"profile":"Confocal bench 532","material":"silicon","exposure_stokes_s":1,
              "exposure_anti_stokes_s":4,"dark_counts":300,"label":"spot A"};type=application/json'
# The reading then names the profile version and calibration it used ("profile", "calibration").`;
}

export const uploadAnswer = `HTTP/1.1 202 Accepted
{"id":"7c1e…","status":"queued","created":true,
 "links":{"self":".../api/v1/measurements/7c1e…","reading":".../api/v1/measurements/7c1e…/reading"}}`;

export function curlPoll(origin: string) {
	return `ID=7c1e…   # the "id" of the 202 answer
until curl -sSf -H "Authorization: Bearer $PHONOTHERM_TOKEN" \\
    ${origin}/api/v1/measurements/$ID/reading -o reading.json; do sleep 2; done
# reading.json: temperature_k, u_temperature_k, expanded_uncertainty_k, coverage_factor, budget, flags …`;
}

export function curlPresigned(origin: string) {
	return `# 1. Ask for upload URLs (one per file, valid for an hour)
curl -sS -X POST ${origin}/api/v1/uploads \\
  -H "Authorization: Bearer $PHONOTHERM_TOKEN" -H "Content-Type: application/json" \\
  -d '{"files":[{"part":"stokes","file_name":"s.csv","bytes":41000000},
              {"part":"anti_stokes","file_name":"as.csv","bytes":39000000}]}'
# → {"uploads":[{"part":"stokes","upload_key":"uploads/…/s.csv","url":"https://…","method":"PUT"}, …]}

# 2. PUT each file to its URL, as it is
curl -sS -X PUT --upload-file s.csv "<url of stokes>"
curl -sS -X PUT --upload-file as.csv "<url of anti_stokes>"

# 3. Create the measurement from the keys
curl -sS -X POST ${origin}/api/v1/measurements \\
  -H "Authorization: Bearer $PHONOTHERM_TOKEN" -H "Idempotency-Key: $(uuidgen)" \\
  -H "Content-Type: application/json" \\
  -d '{"metadata":{"laser_nm":532,"modes":[520.7],"c_factor":1,"u_c_factor":0.02},
       "uploads":{"stokes":"uploads/…/s.csv","anti_stokes":"uploads/…/as.csv"}}'`;
}

export function python(origin: string) {
	return `# Python 3, standard library only: upload a pair, then wait for the reading.
import json, os, sys, time, urllib.error, urllib.request, uuid

API = "${origin}/api/v1"
AUTH = {"Authorization": "Bearer " + os.environ["PHONOTHERM_TOKEN"]}
META = ${JSON.stringify(META)}

def call(url, data=None, headers={}):
    req = urllib.request.Request(url, data=data, headers={**AUTH, **headers})
    with urllib.request.urlopen(req, timeout=60) as r:
        return json.load(r)

def upload(stokes, anti_stokes, meta, key):
    b = uuid.uuid4().hex
    parts = [("metadata", "metadata.json", "application/json", json.dumps(meta).encode())]
    for name, path in (("stokes", stokes), ("anti_stokes", anti_stokes)):
        parts.append((name, os.path.basename(path), "text/csv", open(path, "rb").read()))
    body = b"".join(
        f'--{b}\\r\\nContent-Disposition: form-data; name="{n}"; filename="{f}"\\r\\n'
        f"Content-Type: {t}\\r\\n\\r\\n".encode() + data + b"\\r\\n"
        for n, f, t, data in parts) + f"--{b}--\\r\\n".encode()
    headers = {"Content-Type": "multipart/form-data; boundary=" + b, "Idempotency-Key": key}
    for attempt in range(5):  # the same key on every retry: one measurement, never two
        try:
            return call(API + "/measurements", body, headers)
        except urllib.error.HTTPError as e:
            if e.code not in (429, 503): sys.exit(json.load(e)["detail"])
        except urllib.error.URLError:
            pass
        time.sleep(2 ** attempt)
    sys.exit("gave up after 5 attempts")

m = upload(sys.argv[1], sys.argv[2], META, str(uuid.uuid4()))
while True:
    try:
        r = call(m["links"]["reading"]); break
    except urllib.error.HTTPError as e:
        if e.code != 404: sys.exit(json.load(e)["detail"])
        time.sleep(2)
for f in r["flags"]: print(f["severity"], f["message"])
if r["temperature_k"] is not None:
    print(f'{r["temperature_k"]:.1f} K ± {r["expanded_uncertainty_k"]:.1f} K (k = {r["coverage_factor"]})')`;
}

export function node(origin: string) {
	return `// Node 20+, no packages: node upload.mjs stokes.csv anti-stokes.csv
import { openAsBlob } from 'node:fs';
import { basename } from 'node:path';

const API = '${origin}/api/v1';
const auth = { authorization: \`Bearer \${process.env.PHONOTHERM_TOKEN}\` };
const meta = ${JSON.stringify(META)};
const [stokes, antiStokes] = process.argv.slice(2);

const body = new FormData();
body.set('metadata', new Blob([JSON.stringify(meta)], { type: 'application/json' }));
body.set('stokes', await openAsBlob(stokes), basename(stokes));
body.set('anti_stokes', await openAsBlob(antiStokes), basename(antiStokes));
const key = crypto.randomUUID(); // reuse it when retrying this upload

const res = await fetch(\`\${API}/measurements\`, {
  method: 'POST', body, headers: { ...auth, 'idempotency-key': key }
});
const m = await res.json();
if (!res.ok) throw new Error(m.detail);

for (;;) {
  const r = await fetch(m.links.reading, { headers: auth });
  const reading = await r.json();
  if (r.ok) {
    for (const f of reading.flags) console.log(f.severity, f.message);
    if (reading.temperature_k !== null) console.log(\`\${reading.temperature_k.toFixed(1)} K ± \${reading.expanded_uncertainty_k.toFixed(1)} K (k = \${reading.coverage_factor})\`);
    break;
  }
  if (r.status !== 404) throw new Error(reading.detail);
  await new Promise((done) => setTimeout(done, 2000));
}`;
}
