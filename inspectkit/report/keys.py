"""An inspector's signing key: a passphrase-protected PKCS#12 file and its certificate.

A small contractor has no certificate authority, so `new_key` makes a
self-signed certificate; a client then checks reports against the certificate
the contractor hands over (or the one kept in the database). A key issued by a
real CA is taken in with `read_key` and used the same way.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass
from pathlib import Path

from cryptography import x509
from cryptography.hazmat.primitives import hashes, serialization
from cryptography.hazmat.primitives.asymmetric import ec, padding, rsa
from cryptography.hazmat.primitives.serialization import pkcs12
from cryptography.x509.oid import NameOID

from inspectkit.model import Inspector
from inspectkit.store import Store
from inspectkit.store.trust import private_folder, trust, write_private

#: A self-signed inspector certificate is good for this long (our default).
VALID_DAYS = 5 * 365
#: RSA key size; 2048 bits is the usual floor for document signatures (common practice).
KEY_BITS = 2048
#: Shortest passphrase for a new key: NIST SP 800-63B §5.1.1.2 asks at least 8
#: characters of a secret a person chooses.
MIN_PASSPHRASE = 8


class KeyProblem(Exception):
    """A key file that cannot be made or used; the message says what to do."""


@dataclass(frozen=True)
class SigningKey:
    """What a report signature needs from a key file, and what the database keeps of it."""

    path: Path
    certificate_pem: str
    subject: str
    not_after: dt.datetime


def new_key(
    path: Path,
    passphrase: bytes,
    *,
    name: str,
    organisation: str = "",
    qualification: str = "",
    now: dt.datetime | None = None,
) -> SigningKey:
    """Make an RSA key and a self-signed certificate, saved together as PKCS#12.

    Args:
        path: Where to write the `.p12` file; an existing file is not overwritten.
        passphrase: Protects the key in the file; must not be empty.
        name: The inspector's name, the certificate's common name.
        organisation: The contractor, the certificate's organisation.
        qualification: Licence or qualification, kept in the certificate's title.
        now: Start of validity (tests pass a fixed time).

    The file is created readable by this user only (0600), in a folder only this
    user can open (0700) when the folder is new; the certificate is trusted on
    this machine from then on, since it was made here.

    Raises:
        KeyProblem: passphrase shorter than `MIN_PASSPHRASE`, or the file exists already.
    """
    if len(passphrase.decode("utf-8", "replace")) < MIN_PASSPHRASE:
        raise KeyProblem(
            f"the passphrase has {len(passphrase.decode('utf-8', 'replace'))} characters; "
            f"a new key needs at least {MIN_PASSPHRASE}"
        )
    if path.exists():
        raise KeyProblem(f"{path} exists already; choose another file with -o")
    start = (now or dt.datetime.now(dt.UTC)).replace(microsecond=0)
    key = rsa.generate_private_key(public_exponent=65537, key_size=KEY_BITS)
    certificate = _self_signed(key, start, name, organisation, qualification)
    blob = pkcs12.serialize_key_and_certificates(
        name.encode("utf-8"),
        key,
        certificate,
        None,
        serialization.BestAvailableEncryption(passphrase),
    )
    if not path.parent.exists():
        private_folder(path.parent)
    try:
        write_private(path, blob, exclusive=True)
    except FileExistsError:
        raise KeyProblem(f"{path} exists already; choose another file with -o") from None
    made = _describe(path, certificate)
    trust(made.certificate_pem, "made on this machine")
    return made


def _self_signed(
    key: rsa.RSAPrivateKey, start: dt.datetime, name: str, organisation: str, qualification: str
) -> x509.Certificate:
    """A certificate for signing documents only (not a CA, no encipherment), valid for
    `VALID_DAYS` from five minutes before `start`."""
    attributes = [x509.NameAttribute(NameOID.COMMON_NAME, name)]
    if organisation:
        attributes.append(x509.NameAttribute(NameOID.ORGANIZATION_NAME, organisation))
    if qualification:
        attributes.append(x509.NameAttribute(NameOID.TITLE, qualification))
    subject = x509.Name(attributes)
    certificate = (
        x509.CertificateBuilder()
        .subject_name(subject)
        .issuer_name(subject)
        .public_key(key.public_key())
        .serial_number(x509.random_serial_number())
        .not_valid_before(start - dt.timedelta(minutes=5))
        .not_valid_after(start + dt.timedelta(days=VALID_DAYS))
        .add_extension(x509.BasicConstraints(ca=False, path_length=None), critical=True)
        .add_extension(
            x509.KeyUsage(
                digital_signature=True,
                content_commitment=True,
                key_encipherment=False,
                data_encipherment=False,
                key_agreement=False,
                key_cert_sign=False,
                crl_sign=False,
                encipher_only=False,
                decipher_only=False,
            ),
            critical=True,
        )
        .add_extension(x509.SubjectKeyIdentifier.from_public_key(key.public_key()), critical=False)
        .sign(key, hashes.SHA256())
    )
    return certificate


def read_key(path: Path, passphrase: bytes) -> SigningKey:
    """Open a PKCS#12 file (made here or issued by a CA) and check it can sign.

    Raises:
        KeyProblem: the file is missing, the passphrase is wrong, or it holds no key.
    """
    try:
        blob = path.read_bytes()
    except OSError as exc:
        raise KeyProblem(f"{path}: cannot read the key file ({exc.strerror})") from exc
    try:
        key, certificate, _ = pkcs12.load_key_and_certificates(blob, passphrase)
    except ValueError as exc:
        raise KeyProblem(f"{path}: wrong passphrase, or not a PKCS#12 (.p12/.pfx) file") from exc
    if key is None or certificate is None:
        raise KeyProblem(f"{path}: holds no private key and certificate; export both from the CA")
    return _describe(path, certificate)


def sign_payload(path: Path, passphrase: bytes, data: bytes) -> tuple[bytes, str]:
    """Sign bytes with the key in a PKCS#12 file (the seal of a signed inspection).

    Returns:
        The signature, and the file's certificate (PEM) that checks it.

    Raises:
        KeyProblem: see `read_key`.
    """
    try:
        key, certificate, _ = pkcs12.load_key_and_certificates(path.read_bytes(), passphrase)
    except OSError as exc:
        raise KeyProblem(f"{path}: cannot read the key file ({exc.strerror})") from exc
    except ValueError as exc:
        raise KeyProblem(f"{path}: wrong passphrase, or not a PKCS#12 (.p12/.pfx) file") from exc
    if certificate is None:
        raise KeyProblem(f"{path}: holds no certificate; export the key with its certificate")
    pem = certificate.public_bytes(serialization.Encoding.PEM).decode("ascii")
    if isinstance(key, rsa.RSAPrivateKey):
        return key.sign(data, padding.PKCS1v15(), hashes.SHA256()), pem
    if isinstance(key, ec.EllipticCurvePrivateKey):
        return key.sign(data, ec.ECDSA(hashes.SHA256())), pem
    raise KeyProblem(f"{path}: holds a kind of key inspectkit cannot sign with (RSA or EC only)")


def certificate_from_pem(pem: str) -> x509.Certificate:
    """The certificate kept on an Inspector record."""
    return x509.load_pem_x509_certificate(pem.encode("ascii"))


def common_name(certificate: x509.Certificate) -> str:
    """The person a certificate names, or its whole subject when it has no common name."""
    names = certificate.subject.get_attributes_for_oid(NameOID.COMMON_NAME)
    return str(names[0].value) if names else certificate.subject.rfc4514_string()


def _describe(path: Path, certificate: x509.Certificate) -> SigningKey:
    return SigningKey(
        path=path,
        certificate_pem=certificate.public_bytes(serialization.Encoding.PEM).decode("ascii"),
        subject=common_name(certificate),
        not_after=certificate.not_valid_after_utc,
    )


def keys_dir(store: Store) -> Path:
    """Folder for key files beside the database (`demo.sqlite` → `demo-keys/`), only ours (0700)."""
    if store.path is None:
        raise KeyProblem("an in-memory database has no folder for keys; give -o FILE")
    return private_folder(store.path.with_name(f"{store.path.stem}-keys"))


def key_path(store: Store, inspector: Inspector) -> Path:
    """Where an inspector's key file is: its recorded path, relative to the database's folder."""
    path = Path(inspector.signing_key)
    if path.is_absolute() or store.path is None:
        return path
    return store.path.parent / path


def stored_key_path(store: Store, path: Path) -> str:
    """The path to record on the Inspector: relative to the database's folder when inside it."""
    path = path.resolve()
    if store.path is not None:
        try:
            return str(path.relative_to(store.path.parent.resolve()))
        except ValueError:
            pass
    return str(path)
