#!/usr/bin/env python3
"""Create an API token the way the browser does: sign in with e-mail and password, then POST /api/v1/tokens.

    python3 examples/create_token.py --server http://127.0.0.1:3000 --email modeller@velora.test --password ...

Prints the secret once (it is stored only as a hash). The tokens page of the app does the same with a form.
"""
import argparse
import sys

import requests


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--server", default="http://127.0.0.1:3000")
    parser.add_argument("--email", required=True)
    parser.add_argument("--password", required=True)
    parser.add_argument("--name", default="script")
    parser.add_argument("--scopes", default="read,evaluate,train")
    args = parser.parse_args()
    base = args.server.rstrip("/")
    browser = requests.Session()
    csrf = browser.get(f"{base}/api/auth/csrf", timeout=30).json()["csrfToken"]
    signed = browser.post(f"{base}/api/auth/callback/credentials", timeout=30,
                          data={"csrfToken": csrf, "email": args.email, "password": args.password, "json": "true"})
    if signed.status_code != 200 or "error=" in signed.json().get("url", ""):
        sys.exit("sign-in refused: check the e-mail address and password")
    created = browser.post(f"{base}/api/v1/tokens", timeout=30,
                           json={"name": args.name, "scopes": args.scopes.split(","), "expiresAt": None, "models": None})
    if created.status_code != 201:
        sys.exit(f"token refused: {created.status_code} {created.json().get('detail')}")
    print(created.json()["token"])
    return 0


if __name__ == "__main__":
    sys.exit(main())
