"""Signing keys and certificates: make them, read them back, refuse the ones that cannot sign.

``new_certificate`` makes an ECDSA P-256 key (FIPS 186-4) and an X.509 certificate (RFC 5280)
for a person, self-signed or issued by a team authority made with ``new_authority``.
``write_key_pair`` writes ``PREFIX.key.pem`` (PKCS#8, RFC 5958; encrypted with the passphrase
when one is given; file mode 0600) and ``PREFIX.cert.pem``. ``load_signer`` reads a key (PEM
PKCS#8 or a PKCS#12 bundle, RFC 7292) and its certificate and refuses, with one line, a wrong
passphrase, a key that does not match the certificate, a certificate outside its validity,
or a key that cannot sign. Every piece of cryptography comes from the ``cryptography`` package.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import os
import stat
from dataclasses import dataclass, field
from pathlib import Path

from cryptography import x509
from cryptography.exceptions import UnsupportedAlgorithm
from cryptography.hazmat.primitives import hashes, serialization
from cryptography.hazmat.primitives.asymmetric import ec, rsa
from cryptography.hazmat.primitives.serialization import pkcs12
from cryptography.x509.oid import NameOID

from orbitledger.kernel.errors import InputError

__all__ = [
    "Signer",
    "cert_fingerprint",
    "cert_identity",
    "key_file_warning",
    "load_certificates",
    "load_signer",
    "new_authority",
    "new_certificate",
    "read_passphrase",
    "write_key_pair",
]

_PERSON_DAYS = 2 * 365
_AUTHORITY_DAYS = 10 * 365
_MAX_READ = 1_000_000  # a key, a certificate chain or a PKCS#12 bundle is a few kilobytes


@dataclass(frozen=True)
class Signer:
    """A private key with its certificate (and any issuer certificates that came with it)."""

    key: ec.EllipticCurvePrivateKey | rsa.RSAPrivateKey
    cert: x509.Certificate
    chain: tuple[x509.Certificate, ...] = ()
    messages: tuple[str, ...] = field(default=())

    @property
    def name(self) -> str:
        return cert_identity(self.cert)["name"]

    @property
    def org(self) -> str:
        return cert_identity(self.cert)["org"]

    @property
    def fingerprint(self) -> str:
        return cert_fingerprint(self.cert)


def cert_fingerprint(cert: x509.Certificate) -> str:
    """SHA-256 of the certificate's DER encoding, 64 hex digits (what ``openssl x509
    -fingerprint -sha256`` prints, without the colons)."""
    return hashlib.sha256(cert.public_bytes(serialization.Encoding.DER)).hexdigest()


def cert_identity(cert: x509.Certificate) -> dict[str, str]:
    """Name (common name), organisation and e-mail address the certificate states."""

    def first(oid: x509.ObjectIdentifier) -> str:
        values = cert.subject.get_attributes_for_oid(oid)
        return str(values[0].value) if values else ""

    email = first(NameOID.EMAIL_ADDRESS)
    try:
        san = cert.extensions.get_extension_for_class(x509.SubjectAlternativeName).value
        email = email or next(iter(san.get_values_for_type(x509.RFC822Name)), "")
    except x509.ExtensionNotFound:
        pass
    return {"name": first(NameOID.COMMON_NAME), "org": first(NameOID.ORGANIZATION_NAME), "email": email}


def _subject(name: str, org: str, email: str, option: str) -> x509.Name:
    if not isinstance(name, str) or not name.strip() or len(name) > 64:
        raise InputError(option, name, "give the signer's name (1 to 64 characters)")
    if "\n" in name or "\r" in name or (org and len(org) > 64):
        raise InputError(option, name, "one line of at most 64 characters")
    parts = [x509.NameAttribute(NameOID.COMMON_NAME, name.strip())]
    if org:
        parts.append(x509.NameAttribute(NameOID.ORGANIZATION_NAME, org.strip()))
    if email:
        if "@" not in email or len(email) > 128:
            raise InputError("--email", email, "not an e-mail address")
        parts.append(x509.NameAttribute(NameOID.EMAIL_ADDRESS, email.strip()))
    return x509.Name(parts)


def _usage(*, ca: bool) -> x509.KeyUsage:
    return x509.KeyUsage(
        digital_signature=not ca,
        content_commitment=not ca,  # "non-repudiation": what document signatures use
        key_encipherment=False,
        data_encipherment=False,
        key_agreement=False,
        key_cert_sign=ca,
        crl_sign=ca,
        encipher_only=False,
        decipher_only=False,
    )


def _builder(
    subject: x509.Name, public_key, days: int, cap: dt.datetime | None = None
) -> x509.CertificateBuilder:
    if not isinstance(days, int) or not 1 <= days <= 20 * 365:
        raise InputError("--days", days, "a validity of 1 to 7300 days")
    now = dt.datetime.now(dt.timezone.utc).replace(microsecond=0)
    not_after = now + dt.timedelta(days=days)
    if cap is not None:
        not_after = min(not_after, cap)  # never valid beyond the authority that issues it
    return (
        x509.CertificateBuilder()
        .subject_name(subject)
        .public_key(public_key)
        .serial_number(x509.random_serial_number())
        .not_valid_before(now - dt.timedelta(minutes=5))  # a little slack for clock drift
        .not_valid_after(not_after)
        .add_extension(x509.SubjectKeyIdentifier.from_public_key(public_key), critical=False)
    )


def new_authority(
    name: str, *, org: str = "", email: str = "", days: int = _AUTHORITY_DAYS
) -> tuple[ec.EllipticCurvePrivateKey, x509.Certificate]:
    """A team's own certificate authority: a key and a self-signed CA certificate (RFC 5280
    4.2.1.9: basicConstraints CA, path length 0, so it issues people's certificates only)."""
    key = ec.generate_private_key(ec.SECP256R1())
    subject = _subject(name, org, email, "--name")
    cert = (
        _builder(subject, key.public_key(), days)
        .issuer_name(subject)
        .add_extension(x509.BasicConstraints(ca=True, path_length=0), critical=True)
        .add_extension(_usage(ca=True), critical=True)
        .sign(key, hashes.SHA256())
    )
    return key, cert


def new_certificate(
    name: str,
    *,
    org: str = "",
    email: str = "",
    days: int = _PERSON_DAYS,
    authority: Signer | None = None,
) -> tuple[ec.EllipticCurvePrivateKey, x509.Certificate]:
    """A person's signing key and certificate: self-signed, or issued by ``authority``."""
    key = ec.generate_private_key(ec.SECP256R1())
    subject = _subject(name, org, email, "--name")
    cap = authority.cert.not_valid_after_utc if authority is not None else None
    builder = _builder(subject, key.public_key(), days, cap)
    builder = builder.add_extension(x509.BasicConstraints(ca=False, path_length=None), critical=True)
    builder = builder.add_extension(_usage(ca=False), critical=True)
    if email:
        builder = builder.add_extension(
            x509.SubjectAlternativeName([x509.RFC822Name(email.strip())]), critical=False
        )
    if authority is None:
        return key, builder.issuer_name(subject).sign(key, hashes.SHA256())
    ca = authority.cert
    try:
        is_ca = ca.extensions.get_extension_for_class(x509.BasicConstraints).value.ca
    except x509.ExtensionNotFound:
        is_ca = False
    if not is_ca:
        raise InputError("--ca-cert", cert_identity(ca)["name"], "is not a certificate authority")
    ski = ca.extensions.get_extension_for_class(x509.SubjectKeyIdentifier).value
    builder = builder.add_extension(
        x509.AuthorityKeyIdentifier.from_issuer_subject_key_identifier(ski), critical=False
    )
    return key, builder.issuer_name(ca.subject).sign(authority.key, hashes.SHA256())


def read_passphrase(path: str | os.PathLike | None, option: str = "--passphrase-file") -> bytes | None:
    """The passphrase in the first line of ``path`` (its line ending dropped), or None."""
    if path is None:
        return None
    text = _read(path, option).decode("utf-8", errors="strict").splitlines()
    if not text or not text[0]:
        raise InputError(option, str(path), "is empty; write the passphrase on its first line")
    return text[0].encode("utf-8")


def _read(path: str | os.PathLike, option: str) -> bytes:
    path = Path(path)
    try:
        info = path.stat()
        if not stat.S_ISREG(info.st_mode):
            raise InputError(option, str(path), "is not a regular file")
        if info.st_size > _MAX_READ:
            raise InputError(option, str(path), f"is {info.st_size} bytes; a key file is a few kB")
        return path.read_bytes()
    except FileNotFoundError:
        raise InputError(option, str(path), "no such file") from None
    except PermissionError:
        raise InputError(option, str(path), "cannot be read (permission denied)") from None
    except UnicodeDecodeError:
        raise InputError(option, str(path), "is not UTF-8 text") from None


def _inside_ledger(path: Path) -> Path | None:
    for folder in path.absolute().parents:
        if (folder / "index.sqlite").is_file():
            return folder
    return None


def write_key_pair(
    prefix: str | os.PathLike, key, cert: x509.Certificate, passphrase: bytes | None
) -> tuple[Path, Path]:
    """Write ``PREFIX.key.pem`` (mode 0600) and ``PREFIX.cert.pem``; refuse to replace a file."""
    from orbitledger.case.io import atomic_write_text

    prefix = Path(prefix)
    key_path = prefix.parent / f"{prefix.name}.key.pem"
    cert_path = prefix.parent / f"{prefix.name}.cert.pem"
    ledger = _inside_ledger(key_path)
    if ledger is not None:
        raise InputError("--out", str(prefix), f"is inside the ledger {ledger}; keep keys out of it")
    if not prefix.parent.is_dir():
        raise InputError("--out", str(prefix), f"no folder {prefix.parent}")
    for path in (key_path, cert_path):
        if path.exists():
            raise InputError("--out", str(path), "exists already; choose another --out prefix")
    encryption = (
        serialization.BestAvailableEncryption(passphrase)
        if passphrase
        else serialization.NoEncryption()
    )
    pem = key.private_bytes(
        serialization.Encoding.PEM, serialization.PrivateFormat.PKCS8, encryption
    )
    try:
        atomic_write_text(key_path, pem.decode("ascii"), exclusive=True, mode=0o600)
        atomic_write_text(
            cert_path, cert.public_bytes(serialization.Encoding.PEM).decode("ascii"), exclusive=True
        )
    except FileExistsError:
        raise InputError("--out", str(prefix), "a file of that name appeared; nothing replaced") from None
    return key_path, cert_path


def key_file_warning(path: str | os.PathLike) -> str | None:
    """A warning when a private-key file can be read by its group or by others."""
    try:
        mode = Path(path).stat().st_mode
    except OSError:
        return None
    if mode & 0o077:
        return (
            f"warning: {path} can be read by others (mode {stat.S_IMODE(mode):04o}); "
            f"a signing key should be yours alone: chmod 600 {path}"
        )
    return None


def load_certificates(path: str | os.PathLike, option: str = "--cert") -> list[x509.Certificate]:
    """Every certificate in a PEM (or DER) file, in file order; InputError if there is none."""
    data = _read(path, option)
    try:
        certs = x509.load_pem_x509_certificates(data) if b"-----BEGIN" in data else [
            x509.load_der_x509_certificate(data)
        ]
    except ValueError as err:
        raise InputError(option, str(path), f"not an X.509 certificate ({err})") from None
    return certs


def _load_private(path: Path, data: bytes, passphrase: bytes | None, option: str):
    if path.suffix.lower() in (".p12", ".pfx"):
        try:
            key, cert, extra = pkcs12.load_key_and_certificates(data, passphrase)
        except ValueError:
            hint = "wrong passphrase" if passphrase else "needs --passphrase-file (or it is damaged)"
            raise InputError(option, str(path), f"cannot open this PKCS#12 bundle: {hint}") from None
        if key is None:
            raise InputError(option, str(path), "this PKCS#12 bundle holds no private key")
        return key, cert, list(extra)
    if b"-----BEGIN" not in data or b"PRIVATE KEY-----" not in data:
        raise InputError(option, str(path), "not a PEM private key (nor a .p12 bundle)")
    try:
        key = serialization.load_pem_private_key(data, password=passphrase)
    except TypeError:  # encrypted without a passphrase, or a passphrase for a plain key
        if passphrase is None:
            raise InputError(option, str(path), "is encrypted: give --passphrase-file") from None
        raise InputError(option, str(path), "is not encrypted: leave out --passphrase-file") from None
    except ValueError:
        if passphrase is not None:
            raise InputError(option, str(path), "wrong passphrase (cannot decrypt the key)") from None
        raise InputError(option, str(path), "not a readable private key") from None
    except UnsupportedAlgorithm as err:
        raise InputError(option, str(path), f"unsupported key type ({err})") from None
    return key, None, []


def _check_validity(cert: x509.Certificate, at: dt.datetime, option: str, path: str) -> None:
    if at < cert.not_valid_before_utc:
        raise InputError(
            option, path, f"certificate not valid yet (valid from {cert.not_valid_before_utc:%Y-%m-%dT%H:%M:%SZ})"
        )
    if at > cert.not_valid_after_utc:
        raise InputError(
            option, path, f"certificate expired on {cert.not_valid_after_utc:%Y-%m-%dT%H:%M:%SZ}"
        )


def load_signer(
    key_path: str | os.PathLike,
    cert_path: str | os.PathLike | None = None,
    passphrase: bytes | None = None,
    *,
    at: dt.datetime | None = None,
    option: str = "--key",
    cert_option: str = "--cert",
    role: str = "sign",
) -> Signer:
    """The key at ``key_path`` and its certificate (from ``cert_path``, or inside a .p12).

    Refuses (InputError) a missing or unreadable key, a wrong passphrase, a certificate that
    does not belong to the key, a certificate outside its validity at ``at`` (default now), a
    key type other than ECDSA or RSA, and (``role="sign"``) a certificate of an authority.
    """
    key_path = Path(key_path)
    data = _read(key_path, option)
    key, bundled, extra = _load_private(key_path, data, passphrase, option)
    if not isinstance(key, ec.EllipticCurvePrivateKey | rsa.RSAPrivateKey):
        raise InputError(option, str(key_path), "only ECDSA and RSA keys can sign here")
    certs = load_certificates(cert_path, cert_option) if cert_path is not None else []
    cert = certs[0] if certs else bundled
    if cert is None:
        raise InputError(cert_option, None, f"give the certificate of {key_path} (--cert FILE.cert.pem)")
    where = str(cert_path or key_path)
    public = serialization.Encoding.DER, serialization.PublicFormat.SubjectPublicKeyInfo
    if cert.public_key().public_bytes(*public) != key.public_key().public_bytes(*public):
        raise InputError(cert_option, where, f"this certificate does not belong to the key {key_path}")
    _check_validity(cert, at or dt.datetime.now(dt.timezone.utc), cert_option, where)
    try:
        is_ca = cert.extensions.get_extension_for_class(x509.BasicConstraints).value.ca
    except x509.ExtensionNotFound:
        is_ca = False
    if is_ca and role == "sign":
        raise InputError(cert_option, where, "is an authority's certificate: sign with a person's key")
    if not cert_identity(cert)["name"]:
        raise InputError(cert_option, where, "the certificate names nobody (no common name)")
    chain = tuple(c for c in [*certs[1:], *extra] if c != cert)
    warning = key_file_warning(key_path)
    return Signer(key, cert, chain, (warning,) if warning else ())
