"""RFC 3161 timestamp tokens: ``check --tsa URL`` against a local time-stamping authority.

The authority is certomancer's Animator (a WSGI app that answers RFC 3161 requests, made for
testing PKI clients) served by werkzeug on 127.0.0.1; its keys are made here with cryptography.
The token's time is the authority's clock, the real one: nothing is patched. What a token does
(RFC 3161 2.4.2): the authority vouches that the signature value existed at its genTime, so
verify takes the signing time from it instead of from the signer's clock.
"""

from __future__ import annotations

import datetime as dt
import textwrap
import threading
from pathlib import Path

import pytest
from test_verify import sine_profile

from speccheck.cli.main import main
from speccheck.report import new_key, verify_report

PASS = b"kestrel-tsa-pass"


def _pem_key(path: Path) -> None:
    from cryptography.hazmat.primitives import serialization
    from cryptography.hazmat.primitives.asymmetric import rsa

    key = rsa.generate_private_key(public_exponent=65537, key_size=2048)
    path.write_bytes(
        key.private_bytes(
            serialization.Encoding.PEM,
            serialization.PrivateFormat.PKCS8,
            serialization.NoEncryption(),
        )
    )


def _config(keys: Path) -> str:
    """A root and one time-stamping certificate; names from our invented scenario."""
    return textwrap.dedent(f"""\
        external-url-prefix: "http://127.0.0.1"
        keysets:
          test:
            path-prefix: {keys}
            keys:
              root: {{path: root.key.pem}}
              tsa: {{path: tsa.key.pem}}
        pki-architectures:
          kestrel:
            keyset: test
            entity-defaults: {{country-name: XX, organization-name: Kestrel Test Time Service}}
            entities:
              root: {{common-name: Kestrel Test Root}}
              tsa: {{common-name: Kestrel Test Time Authority}}
            certs:
              root:
                subject: root
                issuer: root
                validity:
                  valid-from: "2000-01-01T00:00:00+0000"
                  valid-to: "2500-01-01T00:00:00+0000"
                extensions:
                  - id: basic_constraints
                    critical: true
                    value: {{ca: true}}
                  - id: key_usage
                    critical: true
                    smart-value: {{schema: key-usage, params: [digital_signature, key_cert_sign]}}
              tsa:
                issuer: root
                validity:
                  valid-from: "2000-01-01T00:00:00+0000"
                  valid-to: "2400-01-01T00:00:00+0000"
                extensions:
                  - id: key_usage
                    critical: true
                    smart-value: {{schema: key-usage, params: [digital_signature]}}
                  - id: extended_key_usage
                    critical: true
                    value: [time_stamping]
            services:
              time-stamping:
                tsa: {{signing-key: tsa, signing-cert: tsa}}
        """)


@pytest.fixture(scope="module")
def tsa_url(tmp_path_factory):
    """The Animator on a free 127.0.0.1 port for this module; shut down afterwards."""
    from certomancer.integrations.animator import Animator, AnimatorArchStore
    from certomancer.registry import CertomancerConfig
    from werkzeug.serving import make_server

    d = tmp_path_factory.mktemp("tsa")
    for name in ("root", "tsa"):
        _pem_key(d / f"{name}.key.pem")
    (d / "pki.yml").write_text(_config(d), encoding="utf-8")
    cfg = CertomancerConfig.from_file(str(d / "pki.yml"))
    app = Animator(AnimatorArchStore(cfg.pki_archs), with_web_ui=False)
    server = make_server("127.0.0.1", 0, app)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    yield f"http://127.0.0.1:{server.server_port}/kestrel/tsa/tsa"
    server.shutdown()
    thread.join(timeout=10)


def test_check_with_tsa_embeds_a_token_verify_reads_its_time(tsa_url, tmp_path, capsys):
    spec = tmp_path / "kfp-2041.yaml"
    spec.write_text(
        "spec_version: 1\npart: {number: KFP-2041, revision: C, surface: seal seat}\n"
        'requirements:\n  - "Ra 0.8"\n',
        encoding="utf-8",
    )
    prof = sine_profile(tmp_path / "p1.csv", 0.40)  # Ra = 2A/pi ([calc])
    key = new_key(tmp_path / "qa.p12", name="Dana Whitfield", passphrase=PASS)
    pw = tmp_path / "pw"
    pw.write_bytes(PASS + b"\n")
    out = tmp_path / "r.pdf"
    before = dt.datetime.now(dt.UTC).replace(microsecond=0)
    args = ["check", str(spec), str(prof), "--report", str(out), "--sign", str(key.p12_path)]
    assert main([*args, "--passphrase-file", str(pw), "--tsa", tsa_url]) == 0
    after = dt.datetime.now(dt.UTC) + dt.timedelta(seconds=1)
    capsys.readouterr()
    r = verify_report(out, trust=[key.pem_path])
    s = r.signature
    assert r.ok and s.time_source == "timestamp token (RFC 3161)" and s.timestamp_intact
    assert "Kestrel Test Time Authority" in s.timestamp_authority
    stamped = dt.datetime.strptime(s.signing_time, "%Y-%m-%d %H:%M:%S UTC").replace(tzinfo=dt.UTC)
    assert before <= stamped <= after
    assert main(["verify", str(out)]) == 0
    assert "timestamp:     intact, from" in capsys.readouterr().out


def test_unreachable_tsa_is_one_line_exit_2(tmp_path, capsys):
    import socket

    with socket.socket() as s:  # a port nobody listens on
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    spec = tmp_path / "s.yaml"
    spec.write_text(
        "spec_version: 1\npart: {number: KFP-2041, revision: C, surface: seal seat}\n"
        'requirements:\n  - "Ra 0.8"\n',
        encoding="utf-8",
    )
    prof = sine_profile(tmp_path / "p1.csv", 0.40)
    key = new_key(tmp_path / "qa.p12", name="Dana Whitfield", passphrase=PASS)
    pw = tmp_path / "pw"
    pw.write_bytes(PASS + b"\n")
    out = tmp_path / "r.pdf"
    args = ["check", str(spec), str(prof), "--report", str(out), "--sign", str(key.p12_path)]
    url = f"http://127.0.0.1:{port}/tsa"
    assert main([*args, "--passphrase-file", str(pw), "--tsa", url]) == 2
    err = capsys.readouterr().err
    assert err.startswith(
        f"speccheck: error: cannot sign the document (time-stamping authority {url})"
    )
    assert err.count("\n") == 1 and not out.exists()
