#!/usr/bin/env python3
"""What a modeller's script does with the Stillpoint registry API, using only requests and NumPy.

    python3 examples/registry_walkthrough.py --server http://127.0.0.1:3000 --token stp_...

The token is created on the tokens page (or POST /api/v1/tokens from a signed-in browser) with the scopes
read, train and evaluate. The script defines a small setup, creates a model, trains a second-order version
on the server's job queue while printing its progress, downloads the coefficients as .npz and evaluates a
wavefront with NumPy alone, uploads a generating set written by numpy.savez_compressed (the exact maps taken
from the server's own draft here, only to have numbers at hand; a real set comes from your own propagator),
trains a first-order version from it, and submits the second-order version for review.

Surrogate results are engineering estimates within the model's validity range; decisions about flight
hardware rest on the exact calculation and the mission's own review.
"""
import argparse
import io
import json
import sys
import time

import numpy as np
import requests


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--server", default="http://127.0.0.1:3000")
    parser.add_argument("--token", required=True)
    args = parser.parse_args()
    api = args.server.rstrip("/") + "/api/v1"
    session = requests.Session()
    session.headers["Authorization"] = f"Bearer {args.token}"

    def call(method, path, **kwargs):
        response = session.request(method, api + path, timeout=60, **kwargs)
        if response.status_code >= 400:
            problem = response.json()
            sys.exit(f"{method} {path}: {response.status_code} {problem.get('title')}: {problem.get('detail')} {problem.get('issues', '')}")
        return response

    stamp = time.strftime("%Y%m%d%H%M%S")
    setup = {"wavelengthNm": 1064, "apertureDiameterM": 0.26, "beamRadiusM": 0.115, "distanceM": 2.2e9,
             "farField": {"halfAngleNrad": 60, "pointsPerAxis": 15}, "pupilSamples": 64}
    created = call("POST", "/setups", json={"name": f"walkthrough {stamp}", "setup": setup}).json()
    print(f"setup {created['id']}: lambda/D = {created['derived']['diffractionAngleNrad']:.1f} nrad, "
          f"on-axis gain {created['derived']['onAxisGain']:.4f}")
    slug = f"walkthrough-{stamp}"
    zernike = {"ordering": "noll", "indices": [4, 5, 6, 7, 8, 9, 10, 11]}
    call("POST", "/models", json={"slug": slug, "name": f"Walkthrough {stamp}", "setupId": created["id"], "zernike": zernike})
    print(f"model {slug}")

    def train(body):
        run = call("POST", f"/models/{slug}/versions", json=body).json()["run"]
        while run["state"] in ("queued", "running"):
            p = run["progress"]
            rate = f"{p['perSecond']:.0f} samples/s" if p["perSecond"] else "-"
            eta = f"ETA {p['etaSeconds']:.0f} s" if p["etaSeconds"] is not None else ""
            print(f"  run {run['id']} {run['state']}: {p['done']}/{p['total']} ({100 * p['fraction']:.0f} %) {rate} {eta}")
            time.sleep(0.5)
            run = call("GET", f"/runs/{run['id']}").json()
        if run["state"] != "succeeded":
            sys.exit(f"run {run['id']} {run['state']}: {run['error']}")
        print(f"  run {run['id']} succeeded: version {run['version']}")
        return run["version"]

    version = train({"order": 2, "generatingSet": {"design": "random", "size": 300, "maxRmsNm": 30, "seed": 7},
                     "validationSet": {"size": 60, "maxRmsNm": 30, "seed": 8}})
    detail = call("GET", f"/models/{slug}/versions/{version}").json()
    worst = detail["statistics"]["overall"]["maxErrorRelativeToPeak"]
    print(f"version {version}: {len(detail['terms'])} terms, validation worst error {100 * worst:.2f} % of peak")

    npz = np.load(io.BytesIO(call("GET", f"/models/{slug}/versions/{version}/coefficients?format=npz").content))
    meta = json.loads(npz["metadata.json"].decode())
    a = {4: 3.2, 5: -1.5, 11: 2.0}
    weights = np.array([np.prod([a.get(int(f), 0.0) for f in t if f != 0]) if any(t) else 1.0 for t in npz["terms"]])
    cx = np.tensordot(weights, npz["coefficients_x"].astype(np.float64), axes=1)
    iy, ix = np.unravel_index(np.argmax(np.abs(cx)), cx.shape)
    theta = npz["theta_nrad"]
    print(f"NumPy alone: peak |c_x| = {abs(cx[iy, ix]):.4g} pm/nrad at ({theta[ix]:.0f}, {theta[iy]:.0f}) nrad")
    print(f"  ({meta['notice']})")

    # A generating set in the API's .npz layout, written by NumPy: 50 wavefronts evaluated on the server's model,
    # standing in for maps from your own exact propagator.
    rng = np.random.default_rng(3)
    coefficients = rng.normal(size=(50, 8)) * 3.0
    features = []
    for row in coefficients:
        values = dict(zip(zernike["indices"], row))
        features.append([np.prod([values[int(f)] for f in t if f != 0]) if any(t) else 1.0 for t in npz["terms"]])
    features = np.array(features)
    ttl_x = np.tensordot(features, npz["coefficients_x"].astype(np.float64), axes=1)
    ttl_y = np.tensordot(features, npz["coefficients_y"].astype(np.float64), axes=1)
    buffer = io.BytesIO()
    np.savez_compressed(buffer, noll_indices=np.array(zernike["indices"]), theta_nrad=theta, coefficients_nm=coefficients,
                        ttl_x_pm_per_nrad=ttl_x, ttl_y_pm_per_nrad=ttl_y)
    uploaded = call("POST", f"/models/{slug}/generating-sets", files={"file": ("set.npz", buffer.getvalue())}).json()
    print(f"uploaded generating set {uploaded['id']}: {uploaded['samples']} samples, sha256 {uploaded['sha256'][:12]}...")
    first = train({"order": 1, "generatingSet": {"design": "uploaded", "generatingSetId": uploaded["id"]}, "validationSet": None})
    print(f"version {first}: first order, trained from the uploaded set")

    submitted = call("POST", f"/models/{slug}/versions/{version}/submit").json()
    print(f"version {version} is now {submitted['state']}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
