//! Third-party time: RFC 3161 timestamp tokens over the plan's (and the
//! data's) SHA-256.
//!
//! `attest stamp` sends a query (RFC 3161, section 2.4.1) with the hash,
//! a random nonce and `certReq` set, so the token carries the authority's
//! certificate and can be checked offline. A token is stored, as the DER
//! `TimeStampToken` (a CMS `ContentInfo`), in
//! `<stem>.plan-stamp-N.tst` (or `<stem>.data-stamp-N.tst`) beside the
//! lock; the lock itself never changes. `openssl ts -verify -digest HASH
//! -in FILE -token_in -CAfile ROOTS` checks the same file.
//!
//! The ASN.1 types come from the RustCrypto crates `x509-tsp`, `cms` and
//! `x509-cert`; the checks below are written here because no maintained
//! crate verifies a timestamp token: the message imprint, the CMS signed
//! attributes (content type, message digest, and the ESS signing
//! certificate of RFC 2634 / RFC 5035 that RFC 3161 section 2.4.2 and
//! RFC 5816 require), the signature, the certificate's purpose (RFC 3161
//! section 2.3: exactly one, critical, extended key usage
//! `id-kp-timeStamping`), its validity at `genTime`, and a path to a root
//! the user trusts (signatures and CA flags only; revocation is not
//! checked, since that needs the network).

use super::{lock_dir, lock_stem, printable, read_bounded, Finding, Status};
use crate::error::{Failure, Result};
use cms::cert::CertificateChoices;
use cms::content_info::ContentInfo;
use cms::signed_data::{SignedData, SignerIdentifier, SignerInfo};
use der::asn1::{Int, ObjectIdentifier as Oid, OctetString};
use der::{Any, Decode, Encode, Sequence};
use sha2::Digest;
use std::path::{Path, PathBuf};
use x509_cert::spki::{AlgorithmIdentifierOwned, SubjectPublicKeyInfoOwned};
use x509_cert::Certificate;
use x509_tsp::{MessageImprint, TimeStampReq, TimeStampResp, TspVersion, TstInfo};

/// The largest token read (a token with a long chain is a few KiB).
const MAX_TOKEN: u64 = 256 << 10;
/// The largest roots file read.
const MAX_ROOTS: u64 = 4 << 20;
/// The most tokens of one kind checked beside one lock.
const MAX_TOKENS: usize = 32;
/// The most certificates between a token's signer and a root.
const MAX_CHAIN: usize = 8;
/// How far the authority's clock may be behind the author's before the
/// lock's own time is called inconsistent with the token.
const CLOCK_SKEW: i64 = 600;

const SHA1: Oid = Oid::new_unwrap("1.3.14.3.2.26");
const SHA256: Oid = Oid::new_unwrap("2.16.840.1.101.3.4.2.1");
const SHA384: Oid = Oid::new_unwrap("2.16.840.1.101.3.4.2.2");
const SHA512: Oid = Oid::new_unwrap("2.16.840.1.101.3.4.2.3");
const RSA: Oid = Oid::new_unwrap("1.2.840.113549.1.1.1");
const RSA_SHA256: Oid = Oid::new_unwrap("1.2.840.113549.1.1.11");
const RSA_SHA384: Oid = Oid::new_unwrap("1.2.840.113549.1.1.12");
const RSA_SHA512: Oid = Oid::new_unwrap("1.2.840.113549.1.1.13");
const EC_KEY: Oid = Oid::new_unwrap("1.2.840.10045.2.1");
const ECDSA_SHA256: Oid = Oid::new_unwrap("1.2.840.10045.4.3.2");
const ECDSA_SHA384: Oid = Oid::new_unwrap("1.2.840.10045.4.3.3");
const ECDSA_SHA512: Oid = Oid::new_unwrap("1.2.840.10045.4.3.4");
const P256: Oid = Oid::new_unwrap("1.2.840.10045.3.1.7");
const P384: Oid = Oid::new_unwrap("1.3.132.0.34");
const ED25519: Oid = Oid::new_unwrap("1.3.101.112");
const SIGNED_DATA: Oid = Oid::new_unwrap("1.2.840.113549.1.7.2");
const CT_TSTINFO: Oid = Oid::new_unwrap("1.2.840.113549.1.9.16.1.4");
const ATTR_CONTENT_TYPE: Oid = Oid::new_unwrap("1.2.840.113549.1.9.3");
const ATTR_MESSAGE_DIGEST: Oid = Oid::new_unwrap("1.2.840.113549.1.9.4");
const ATTR_SIGNING_CERT: Oid = Oid::new_unwrap("1.2.840.113549.1.9.16.2.12");
const ATTR_SIGNING_CERT_V2: Oid = Oid::new_unwrap("1.2.840.113549.1.9.16.2.47");
const EXT_EKU: Oid = Oid::new_unwrap("2.5.29.37");
const EXT_BASIC_CONSTRAINTS: Oid = Oid::new_unwrap("2.5.29.19");
const KP_TIMESTAMPING: Oid = Oid::new_unwrap("1.3.6.1.5.5.7.3.8");

/// What a token covers.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Covers {
    /// The SHA-256 of the canonical plan (the lock's `plan_sha256`).
    Plan,
    /// The SHA-256 of the data file at a run.
    Data,
}

impl Covers {
    fn word(self) -> &'static str {
        match self {
            Covers::Plan => "plan",
            Covers::Data => "data",
        }
    }
}

/// The file a token of this kind and number lives in.
pub(crate) fn token_path(lock_path: &Path, covers: Covers, n: usize) -> PathBuf {
    lock_path.with_file_name(format!(
        "{}.{}-stamp-{n}.tst",
        lock_stem(lock_path),
        covers.word()
    ))
}

/// The token files of one kind beside a lock, by number. More than
/// [`MAX_TOKENS`] is reported by the caller.
fn token_files(lock_path: &Path, covers: Covers) -> Vec<(usize, PathBuf)> {
    let prefix = format!("{}.{}-stamp-", lock_stem(lock_path), covers.word());
    let mut out = Vec::new();
    let Ok(dir) = std::fs::read_dir(lock_dir(lock_path)) else {
        return out;
    };
    for entry in dir.flatten() {
        let name = entry.file_name().to_string_lossy().into_owned();
        let Some(n) = name
            .strip_prefix(&prefix)
            .and_then(|r| r.strip_suffix(".tst"))
            .filter(|n| !n.is_empty() && n.len() <= 6 && n.bytes().all(|b| b.is_ascii_digit()))
            .and_then(|n| n.parse::<usize>().ok())
        else {
            continue;
        };
        out.push((n, entry.path()));
    }
    out.sort();
    out
}

/// The next free token path of a kind (one past the highest number).
fn next_token_path(lock_path: &Path, covers: Covers) -> PathBuf {
    let n = token_files(lock_path, covers)
        .last()
        .map_or(1, |(n, _)| n + 1);
    token_path(lock_path, covers, n)
}

/// A token fetched from an authority, checked, not yet written.
pub(crate) struct Fetched {
    url: String,
    der: Vec<u8>,
    /// When the authority says it saw the hash (RFC 3339, UTC).
    pub gen_time: String,
}

/// Asks each authority for a token over `hash_hex` (SHA-256, hex). All or
/// nothing: if one authority fails, no token is returned.
pub(crate) fn fetch_all(urls: &[String], hash_hex: &str) -> Result<Vec<Fetched>> {
    let hash = hex_bytes(hash_hex)
        .ok_or_else(|| Failure::internal(format!("not a SHA-256 in hex: {hash_hex}")))?;
    urls.iter().map(|u| fetch(u, &hash)).collect()
}

fn fetch(url: &str, hash: &[u8]) -> Result<Fetched> {
    let shown = super::http::shown(url);
    let mut nonce = [0u8; 16];
    getrandom::getrandom(&mut nonce)
        .map_err(|e| Failure::internal(format!("cannot draw a random nonce: {e}")))?;
    nonce[0] = (nonce[0] & 0x7f) | 0x40;
    let nonce = Int::new(&nonce).map_err(|e| Failure::internal(e.to_string()))?;
    let req = TimeStampReq {
        version: TspVersion::V1,
        message_imprint: imprint(hash)?,
        req_policy: None,
        nonce: Some(nonce.clone()),
        cert_req: true,
        extensions: None,
    };
    let query = req
        .to_der()
        .map_err(|e| Failure::internal(format!("cannot encode the query: {e}")))?;
    let body = super::http::post_query(url, &query)?;
    let refused = |what: String| {
        Failure::input(format!("the time-stamping authority {shown} {what}"))
            .help("try another authority; nothing was written")
    };
    let resp = TimeStampResp::from_der(&body).map_err(|e| {
        refused(format!(
            "sent something that is not a timestamp response ({e})"
        ))
    })?;
    use cmpv2::status::PkiStatus;
    if !matches!(
        resp.status.status,
        PkiStatus::Accepted | PkiStatus::GrantedWithMods
    ) {
        return Err(refused(format!(
            "refused the request (status {:?})",
            resp.status.status
        )));
    }
    let token = resp
        .time_stamp_token
        .ok_or_else(|| refused("granted the request but sent no token".into()))?;
    let der = token
        .to_der()
        .map_err(|e| Failure::internal(e.to_string()))?;
    let parsed = parse(&der).map_err(|e| refused(format!("sent a token that {e}")))?;
    if parsed.tst.nonce.as_ref() != Some(&nonce) {
        return Err(refused("answered with another request's nonce".into()));
    }
    if parsed.imprint_sha256() != Some(hash) {
        return Err(refused("stamped a different hash than the one sent".into()));
    }
    parsed
        .verify_signature()
        .map_err(|e| refused(format!("sent a token whose signature {e}")))?;
    Ok(Fetched {
        url: url.to_string(),
        der,
        gen_time: crate::lock::rfc3339_utc(parsed.gen_time()),
    })
}

/// Writes fetched tokens beside the lock, each in a new file.
pub(crate) fn store(lock_path: &Path, covers: Covers, tokens: &[Fetched]) -> Result<Vec<PathBuf>> {
    let mut written = Vec::new();
    for t in tokens {
        let path = next_token_path(lock_path, covers);
        crate::output::create_new(&path, &t.der)?;
        written.push(path);
    }
    Ok(written)
}

impl Fetched {
    /// The authority's address, as the user gave it.
    pub(crate) fn url(&self) -> &str {
        &self.url
    }
}

fn imprint(hash: &[u8]) -> Result<MessageImprint> {
    Ok(MessageImprint {
        hash_algorithm: AlgorithmIdentifierOwned {
            oid: SHA256,
            parameters: Some(
                Any::encode_from(&der::asn1::Null).map_err(|e| Failure::internal(e.to_string()))?,
            ),
        },
        hashed_message: OctetString::new(hash).map_err(|e| Failure::internal(e.to_string()))?,
    })
}

/// The certificates the user trusts as time-stamping roots.
pub(crate) struct Roots {
    certs: Vec<Certificate>,
}

impl Roots {
    /// Reads a PEM file of one or more certificates.
    pub(crate) fn read(path: &Path) -> Result<Roots> {
        let bytes = read_bounded(path, MAX_ROOTS)
            .map_err(|e| e.help("--tsa-roots names a PEM file of root certificates"))?;
        let certs = Certificate::load_pem_chain(&bytes).map_err(|e| {
            Failure::input(format!("the roots file cannot be read as PEM certificates: {e}"))
                .in_file(path)
                .help("--tsa-roots names a PEM file holding one or more `-----BEGIN CERTIFICATE-----` blocks")
        })?;
        if certs.is_empty() {
            return Err(Failure::input("the roots file holds no certificate")
                .in_file(path)
                .help("--tsa-roots names a PEM file holding one or more `-----BEGIN CERTIFICATE-----` blocks"));
        }
        Ok(Roots { certs })
    }
}

/// A token taken apart.
struct Parsed {
    signed: SignedData,
    tst_der: Vec<u8>,
    tst: TstInfo,
}

/// Parses a `TimeStampToken`; the error completes "the token …".
fn parse(der: &[u8]) -> std::result::Result<Parsed, String> {
    let ci = ContentInfo::from_der(der).map_err(|e| format!("cannot be read ({e})"))?;
    if ci.content_type != SIGNED_DATA {
        return Err("is not CMS signed data".into());
    }
    let inner = ci
        .content
        .to_der()
        .map_err(|e| format!("cannot be read ({e})"))?;
    let signed = SignedData::from_der(&inner).map_err(|e| format!("cannot be read ({e})"))?;
    if signed.encap_content_info.econtent_type != CT_TSTINFO {
        return Err("holds no timestamp (its content is not TSTInfo)".into());
    }
    let econtent = signed
        .encap_content_info
        .econtent
        .as_ref()
        .ok_or("holds no timestamp content")?;
    let tst_der = OctetString::from_der(
        &econtent
            .to_der()
            .map_err(|e| format!("cannot be read ({e})"))?,
    )
    .map_err(|e| format!("cannot be read ({e})"))?
    .into_bytes();
    let tst =
        TstInfo::from_der(&tst_der).map_err(|e| format!("has an unreadable TSTInfo ({e})"))?;
    Ok(Parsed {
        signed,
        tst_der,
        tst,
    })
}

impl Parsed {
    fn imprint_sha256(&self) -> Option<&[u8]> {
        (self.tst.message_imprint.hash_algorithm.oid == SHA256)
            .then(|| self.tst.message_imprint.hashed_message.as_bytes())
    }

    fn gen_time(&self) -> i64 {
        self.tst.gen_time.to_unix_duration().as_secs() as i64
    }

    fn certs(&self) -> Vec<&Certificate> {
        let mut out = Vec::new();
        if let Some(set) = &self.signed.certificates {
            for c in set.0.iter() {
                if let CertificateChoices::Certificate(cert) = c {
                    out.push(cert);
                }
            }
        }
        out
    }

    fn signer_info(&self) -> std::result::Result<&SignerInfo, String> {
        let infos = &self.signed.signer_infos.0;
        if infos.len() != 1 {
            return Err(format!("has {} signers, not one", infos.len()));
        }
        infos.get(0).ok_or_else(|| "has no signer".to_string())
    }

    /// The certificate that signed, found by the signer identifier.
    fn signer_cert(&self) -> std::result::Result<&Certificate, String> {
        let si = self.signer_info()?;
        self.certs()
            .into_iter()
            .find(|c| match &si.sid {
                SignerIdentifier::IssuerAndSerialNumber(ias) => {
                    c.tbs_certificate.issuer == ias.issuer
                        && c.tbs_certificate.serial_number == ias.serial_number
                }
                SignerIdentifier::SubjectKeyIdentifier(ski) => {
                    subject_key_id(c).as_deref() == Some(ski.0.as_bytes())
                }
            })
            .ok_or_else(|| "does not carry the authority's certificate".to_string())
    }

    /// Checks the signed attributes and the signature; the error completes
    /// "the token's signature …".
    fn verify_signature(&self) -> std::result::Result<&Certificate, String> {
        let si = self.signer_info()?;
        let cert = self.signer_cert()?;
        let attrs = si
            .signed_attrs
            .as_ref()
            .ok_or("has no signed attributes (RFC 3161 requires them)")?;
        let attr = |oid: Oid| attrs.iter().find(|a| a.oid == oid);
        let single = |oid: Oid| -> std::result::Result<&Any, String> {
            let a = attr(oid).ok_or_else(|| format!("lacks the attribute {oid}"))?;
            if a.values.len() != 1 {
                return Err(format!("has {} values for attribute {oid}", a.values.len()));
            }
            a.values
                .get(0)
                .ok_or_else(|| format!("lacks the attribute {oid}"))
        };
        let ct = single(ATTR_CONTENT_TYPE)?
            .decode_as::<Oid>()
            .map_err(|_| "has an unreadable content-type attribute")?;
        if ct != CT_TSTINFO {
            return Err("signs another content type than a timestamp".into());
        }
        let md = single(ATTR_MESSAGE_DIGEST)?
            .decode_as::<OctetString>()
            .map_err(|_| "has an unreadable message-digest attribute")?;
        let digest_oid = si.digest_alg.oid;
        let want = digest(digest_oid, &self.tst_der)
            .ok_or_else(|| format!("uses an unsupported digest {digest_oid}"))?;
        if md.as_bytes() != want.as_slice() {
            return Err("does not cover this timestamp: the timestamp was altered".into());
        }
        // ESS signing certificate (v2 from RFC 5035, as RFC 5816 allows,
        // or v1 with SHA-1): the first identifier names the signer's
        // certificate, so the certificate cannot be swapped.
        let cert_der = cert.to_der().map_err(|e| e.to_string())?;
        if let Ok(v2) = single(ATTR_SIGNING_CERT_V2) {
            let sc = v2
                .decode_as::<SigningCertificateV2>()
                .map_err(|_| "has an unreadable signing-certificate attribute")?;
            let first = sc.certs.first().ok_or("names no signing certificate")?;
            let alg = first.hash_algorithm.as_ref().map_or(SHA256, |a| a.oid);
            let h = digest(alg, &cert_der).ok_or("names its certificate by an unsupported hash")?;
            if first.cert_hash.as_bytes() != h.as_slice() {
                return Err("names another certificate than the one it carries".into());
            }
        } else if let Ok(v1) = single(ATTR_SIGNING_CERT) {
            let sc = v1
                .decode_as::<SigningCertificate>()
                .map_err(|_| "has an unreadable signing-certificate attribute")?;
            let first = sc.certs.first().ok_or("names no signing certificate")?;
            let h = digest(SHA1, &cert_der).ok_or("cannot hash its certificate")?;
            if first.cert_hash.as_bytes() != h.as_slice() {
                return Err("names another certificate than the one it carries".into());
            }
        } else {
            return Err("does not name its signing certificate (RFC 3161 requires it)".into());
        }
        let signed_attrs = attrs.to_der().map_err(|e| e.to_string())?;
        verify_with(
            &cert.tbs_certificate.subject_public_key_info,
            si.signature_algorithm.oid,
            Some(digest_oid),
            &signed_attrs,
            si.signature.as_bytes(),
        )
        .map_err(|e| format!("does not verify ({e})"))?;
        Ok(cert)
    }
}

/// ESSCertIDv2 (RFC 5035, section 4).
#[derive(Clone, Debug, Eq, PartialEq, Sequence)]
struct EssCertIdV2 {
    #[asn1(optional = "true")]
    hash_algorithm: Option<AlgorithmIdentifierOwned>,
    cert_hash: OctetString,
    #[asn1(optional = "true")]
    issuer_serial: Option<Any>,
}

/// SigningCertificateV2 (RFC 5035, section 4).
#[derive(Clone, Debug, Eq, PartialEq, Sequence)]
struct SigningCertificateV2 {
    certs: Vec<EssCertIdV2>,
    #[asn1(optional = "true")]
    policies: Option<Any>,
}

/// ESSCertID (RFC 2634, section 5.4).
#[derive(Clone, Debug, Eq, PartialEq, Sequence)]
struct EssCertId {
    cert_hash: OctetString,
    #[asn1(optional = "true")]
    issuer_serial: Option<Any>,
}

/// SigningCertificate (RFC 2634, section 5.4).
#[derive(Clone, Debug, Eq, PartialEq, Sequence)]
struct SigningCertificate {
    certs: Vec<EssCertId>,
    #[asn1(optional = "true")]
    policies: Option<Any>,
}

fn digest(oid: Oid, data: &[u8]) -> Option<Vec<u8>> {
    Some(match oid {
        SHA1 => sha1::Sha1::digest(data).to_vec(),
        SHA256 => sha2::Sha256::digest(data).to_vec(),
        SHA384 => sha2::Sha384::digest(data).to_vec(),
        SHA512 => sha2::Sha512::digest(data).to_vec(),
        _ => return None,
    })
}

/// Verifies `sig` over `msg` with the key in `spki`. `digest_oid` is the
/// digest named beside a bare key algorithm (CMS allows `rsaEncryption`).
fn verify_with(
    spki: &SubjectPublicKeyInfoOwned,
    sig_alg: Oid,
    digest_oid: Option<Oid>,
    msg: &[u8],
    sig: &[u8],
) -> std::result::Result<(), String> {
    let key_bytes = spki.subject_public_key.raw_bytes();
    let hash_oid = match sig_alg {
        RSA_SHA256 | ECDSA_SHA256 => SHA256,
        RSA_SHA384 | ECDSA_SHA384 => SHA384,
        RSA_SHA512 | ECDSA_SHA512 => SHA512,
        RSA | EC_KEY => digest_oid.ok_or("no digest named")?,
        ED25519 => ED25519,
        other => return Err(format!("unsupported signature algorithm {other}")),
    };
    match spki.algorithm.oid {
        RSA if matches!(sig_alg, RSA | RSA_SHA256 | RSA_SHA384 | RSA_SHA512) => {
            use rsa::pkcs1::DecodeRsaPublicKey;
            let key =
                rsa::RsaPublicKey::from_pkcs1_der(key_bytes).map_err(|_| "unreadable RSA key")?;
            let h = digest(hash_oid, msg).ok_or("unsupported digest")?;
            let scheme = match hash_oid {
                SHA256 => rsa::Pkcs1v15Sign::new::<sha2::Sha256>(),
                SHA384 => rsa::Pkcs1v15Sign::new::<sha2::Sha384>(),
                SHA512 => rsa::Pkcs1v15Sign::new::<sha2::Sha512>(),
                _ => return Err("RSA with SHA-1 is not accepted".into()),
            };
            key.verify(scheme, &h, sig)
                .map_err(|_| "bad signature".into())
        }
        EC_KEY if matches!(sig_alg, EC_KEY | ECDSA_SHA256 | ECDSA_SHA384 | ECDSA_SHA512) => {
            use p256::ecdsa::signature::hazmat::PrehashVerifier;
            let curve = spki
                .algorithm
                .parameters
                .as_ref()
                .and_then(|p| p.decode_as::<Oid>().ok());
            let h = digest(hash_oid, msg).ok_or("unsupported digest")?;
            match curve {
                Some(P256) => {
                    let k = p256::ecdsa::VerifyingKey::from_sec1_bytes(key_bytes)
                        .map_err(|_| "unreadable P-256 key")?;
                    let s = p256::ecdsa::Signature::from_der(sig).map_err(|_| "bad signature")?;
                    k.verify_prehash(&h, &s).map_err(|_| "bad signature".into())
                }
                Some(P384) => {
                    let k = p384::ecdsa::VerifyingKey::from_sec1_bytes(key_bytes)
                        .map_err(|_| "unreadable P-384 key")?;
                    let s = p384::ecdsa::Signature::from_der(sig).map_err(|_| "bad signature")?;
                    k.verify_prehash(&h, &s).map_err(|_| "bad signature".into())
                }
                _ => Err("unsupported elliptic curve".into()),
            }
        }
        ED25519 if sig_alg == ED25519 => {
            let k: [u8; 32] = key_bytes.try_into().map_err(|_| "unreadable Ed25519 key")?;
            let k = ed25519_dalek::VerifyingKey::from_bytes(&k)
                .map_err(|_| "unreadable Ed25519 key")?;
            let s = ed25519_dalek::Signature::from_slice(sig).map_err(|_| "bad signature")?;
            k.verify_strict(msg, &s).map_err(|_| "bad signature".into())
        }
        other => Err(format!(
            "key algorithm {other} does not fit signature algorithm {sig_alg}"
        )),
    }
}

fn subject_key_id(c: &Certificate) -> Option<Vec<u8>> {
    let ext = c
        .tbs_certificate
        .extensions
        .as_ref()?
        .iter()
        .find(|e| e.extn_id == Oid::new_unwrap("2.5.29.14"))?;
    OctetString::from_der(ext.extn_value.as_bytes())
        .ok()
        .map(|o| o.into_bytes())
}

fn fingerprint(c: &Certificate) -> String {
    let der = c.to_der().unwrap_or_default();
    crate::plan::canonical::sha256_hex(&der)
}

fn validity(c: &Certificate) -> (i64, i64) {
    let v = &c.tbs_certificate.validity;
    (
        v.not_before.to_unix_duration().as_secs() as i64,
        v.not_after.to_unix_duration().as_secs() as i64,
    )
}

/// RFC 3161 section 2.3: the one extended key usage is
/// `id-kp-timeStamping`, and it is critical.
fn check_purpose(c: &Certificate) -> std::result::Result<(), String> {
    let exts = c.tbs_certificate.extensions.as_deref().unwrap_or(&[]);
    let eku: Vec<_> = exts.iter().filter(|e| e.extn_id == EXT_EKU).collect();
    let [ext] = eku.as_slice() else {
        return Err("has no extended key usage for time-stamping".into());
    };
    let purposes = Vec::<Oid>::from_der(ext.extn_value.as_bytes())
        .map_err(|_| "has an unreadable extended key usage")?;
    if purposes != [KP_TIMESTAMPING] {
        let list: Vec<String> = purposes.iter().map(|p| p.to_string()).collect();
        return Err(format!(
            "is not for time-stamping only (its extended key usage is {})",
            list.join(", ")
        ));
    }
    if !ext.critical {
        return Err("does not mark its time-stamping purpose critical".into());
    }
    Ok(())
}

fn is_ca(c: &Certificate) -> bool {
    #[derive(Sequence)]
    struct BasicConstraints {
        #[asn1(default = "Default::default")]
        ca: bool,
        #[asn1(optional = "true")]
        path_len: Option<u32>,
    }
    c.tbs_certificate
        .extensions
        .as_deref()
        .unwrap_or(&[])
        .iter()
        .find(|e| e.extn_id == EXT_BASIC_CONSTRAINTS)
        .and_then(|e| BasicConstraints::from_der(e.extn_value.as_bytes()).ok())
        .is_some_and(|b| b.ca)
}

/// Whether `child` was signed by `parent`'s key.
fn signed_by(child: &Certificate, parent: &Certificate) -> bool {
    if child.tbs_certificate.issuer != parent.tbs_certificate.subject {
        return false;
    }
    let Ok(tbs) = child.tbs_certificate.to_der() else {
        return false;
    };
    let Some(sig) = child.signature.as_bytes() else {
        return false;
    };
    verify_with(
        &parent.tbs_certificate.subject_public_key_info,
        child.signature_algorithm.oid,
        None,
        &tbs,
        sig,
    )
    .is_ok()
}

/// Finds a path from `signer` to one of `roots`, every certificate valid
/// at `at`; returns the root's subject. The error completes "the
/// authority's certificate …".
fn chain(
    signer: &Certificate,
    carried: &[&Certificate],
    roots: &Roots,
    at: i64,
) -> std::result::Result<String, String> {
    let mut current = signer;
    for _ in 0..MAX_CHAIN {
        if let Some(r) = roots.certs.iter().find(|r| *r == current) {
            return Ok(r.tbs_certificate.subject.to_string());
        }
        if let Some(r) = roots.certs.iter().find(|r| signed_by(current, r)) {
            let (from, to) = validity(r);
            if at < from || at > to {
                return Err(format!(
                    "chains to the root {} , which was not valid at the token's time",
                    r.tbs_certificate.subject
                ));
            }
            return Ok(r.tbs_certificate.subject.to_string());
        }
        let Some(next) = carried
            .iter()
            .find(|c| *c != &current && is_ca(c) && signed_by(current, c))
        else {
            return Err(format!(
                "does not chain to a root you trust (its issuer is {})",
                current.tbs_certificate.issuer
            ));
        };
        let (from, to) = validity(next);
        if at < from || at > to {
            return Err(format!(
                "chains through {}, which was not valid at the token's time",
                next.tbs_certificate.subject
            ));
        }
        current = next;
    }
    Err("has too long a chain of certificates".into())
}

/// Days since 1970-01-01 of a civil date (Hinnant 2013, as in `lock`).
pub(crate) fn days_from_civil(y: i64, m: i64, d: i64) -> i64 {
    let y = if m <= 2 { y - 1 } else { y };
    let era = y.div_euclid(400);
    let yoe = y - era * 400;
    let doy = (153 * (if m > 2 { m - 3 } else { m + 9 }) + 2) / 5 + d - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    era * 146_097 + doe - 719_468
}

/// `YYYY-MM-DDTHH:MM:SSZ` as epoch seconds.
fn parse_rfc3339(text: &str) -> Option<i64> {
    let b = text.as_bytes();
    if b.len() != 20 || b[4] != b'-' || b[7] != b'-' || b[10] != b'T' || b[19] != b'Z' {
        return None;
    }
    let n = |a: usize, z: usize| text.get(a..z)?.parse::<i64>().ok();
    Some(
        days_from_civil(n(0, 4)?, n(5, 7)?, n(8, 10)?) * 86_400
            + n(11, 13)? * 3600
            + n(14, 16)? * 60
            + n(17, 19)?,
    )
}

fn hex_bytes(h: &str) -> Option<Vec<u8>> {
    if h.len() % 2 != 0 {
        return None;
    }
    (0..h.len())
        .step_by(2)
        .map(|i| u8::from_str_radix(h.get(i..i + 2)?, 16).ok())
        .collect()
}

/// The first 12 characters of a hash, safe for any text (a hostile lock
/// may hold anything where a hash belongs).
fn short(h: &str) -> String {
    printable(&h.chars().take(12).collect::<String>())
}

/// How long `secs` is, roughly, in words.
fn span(secs: i64) -> String {
    let s = secs.abs();
    match s {
        0..=119 => format!("{s} s"),
        120..=7199 => format!("{} min", s / 60),
        7200..=172_799 => format!("{} h", s / 3600),
        _ => format!("{} days", s / 86_400),
    }
}

/// Checks every token beside a lock. A lock without tokens gives no line
/// unless roots were given (then the missing stamp is reported).
pub(crate) fn check(lock_path: &Path, lock_bytes: &[u8], roots: Option<&Roots>) -> Vec<Finding> {
    let mut out = Vec::new();
    let lock: Option<crate::lock::LockFile> = serde_json::from_slice(lock_bytes).ok();
    let Some(lock) = lock else {
        return out;
    };
    let locked_at = parse_rfc3339(&lock.locked_at);
    let plans = token_files(lock_path, Covers::Plan);
    let datas = token_files(lock_path, Covers::Data);
    if plans.is_empty() {
        if roots.is_some() {
            out.push(Finding::new(
                "plan stamp",
                Status::Bad,
                format!(
                    "missing: no timestamp token beside {} (expected {})",
                    printable(&lock_path.display().to_string()),
                    printable(&token_path(lock_path, Covers::Plan, 1).display().to_string())
                ),
            ));
        }
        if datas.is_empty() {
            return out;
        }
    }
    let data_hash = data_hash(lock_path, &lock);
    let mut first_plan_time: Option<i64> = None;
    for (covers, files) in [(Covers::Plan, plans), (Covers::Data, datas)] {
        if files.len() > MAX_TOKENS {
            out.push(Finding::new(
                format!("{} stamps", covers.word()),
                Status::Bad,
                format!(
                    "{} token files; attest checks at most {MAX_TOKENS}",
                    files.len()
                ),
            ));
        }
        for (n, path) in files.into_iter().take(MAX_TOKENS) {
            let what = format!("{} stamp {n}", covers.word());
            let expected = match covers {
                Covers::Plan => Some(lock.plan_sha256.clone()),
                Covers::Data => data_hash.clone(),
            };
            let (status, seen, anchor, time) = one(&path, covers, expected.as_deref(), roots);
            if let (Some(t), Covers::Plan) = (time, covers) {
                first_plan_time = Some(first_plan_time.map_or(t, |f: i64| f.min(t)));
            }
            let (against, base) = match covers {
                Covers::Plan => (locked_at, "the lock's own time"),
                Covers::Data => (first_plan_time, "the first plan stamp"),
            };
            let (status, relation) = match (time, against) {
                (Some(t), Some(l)) if covers == Covers::Plan && t + CLOCK_SKEW < l => (
                    Status::Bad,
                    format!(
                        ", {} before the lock's own time {}: the lock's time is not what the authority saw",
                        span(l - t),
                        printable(&lock.locked_at)
                    ),
                ),
                (Some(t), Some(l)) if t < l => {
                    (status, format!(" ({} before {base})", span(l - t)))
                }
                (Some(t), Some(l)) => (status, format!(" ({} after {base})", span(t - l))),
                _ => (status, String::new()),
            };
            let text = format!("{seen}{relation}{anchor}");
            out.push(Finding::new(what, status, text));
        }
    }
    out
}

/// The sound tokens beside a lock for a report (checked as `verify` does
/// without roots; a token that fails is left to `verify` to report).
pub(crate) fn summary(lock_path: &Path, lock_bytes: &[u8]) -> Vec<super::Evidence> {
    let mut out = Vec::new();
    let Ok(lock) = serde_json::from_slice::<crate::lock::LockFile>(lock_bytes) else {
        return out;
    };
    let data = data_hash(lock_path, &lock);
    for covers in [Covers::Plan, Covers::Data] {
        let expected = match covers {
            Covers::Plan => Some(lock.plan_sha256.clone()),
            Covers::Data => data.clone(),
        };
        for (_, path) in token_files(lock_path, covers).into_iter().take(MAX_TOKENS) {
            let Some(der) = read_bounded(&path, MAX_TOKEN).ok() else {
                continue;
            };
            let Ok(p) = parse(&der) else { continue };
            if one(&path, covers, expected.as_deref(), None).0 == Status::Bad {
                continue;
            }
            let Ok(cert) = p.signer_cert() else { continue };
            let by = cert.tbs_certificate.subject.to_string();
            let time = crate::lock::rfc3339_utc(p.gen_time());
            let hash = expected.clone().unwrap_or_default();
            let not = match covers {
                Covers::Plan => "not that the plan was written before the data were seen",
                Covers::Data => "not that the data did not exist, or were not seen, earlier",
            };
            out.push(super::Evidence {
                kind: super::EvidenceKind::Timestamp,
                file: crate::lock::file_name(&path),
                covers: format!("{} sha256 {hash}", covers.word()),
                shows: format!(
                    "The time-stamping authority {by} saw this {} hash by {time}; this shows it existed by then, {not}.",
                    covers.word()
                ),
                by,
                time: Some(time),
            });
        }
    }
    out
}

/// The SHA-256 of the data file the lock's plan names, if it can be read.
fn data_hash(lock_path: &Path, lock: &crate::lock::LockFile) -> Option<String> {
    let path = lock_dir(lock_path).join(lock.plan.data.file()?);
    let meta = std::fs::metadata(&path).ok()?;
    if !meta.is_file() {
        return None;
    }
    let mut f = std::fs::File::open(&path).ok()?;
    let mut h = sha2::Sha256::new();
    std::io::copy(&mut f, &mut h).ok()?;
    Some(crate::plan::canonical::hex(&h.finalize()))
}

/// Checks one token: (status, sentence, genTime if the token is sound).
fn one(
    path: &Path,
    covers: Covers,
    expected: Option<&str>,
    roots: Option<&Roots>,
) -> (Status, String, String, Option<i64>) {
    let bad = |t: String| (Status::Bad, t, String::new(), None);
    let name = path
        .file_name()
        .map(|n| printable(&n.to_string_lossy()))
        .unwrap_or_default();
    let der = match read_bounded(path, MAX_TOKEN) {
        Ok(d) => d,
        Err(e) => return bad(printable(&e.what)),
    };
    let p = match parse(&der) {
        Ok(p) => p,
        Err(e) => return bad(format!("{name} is not a usable timestamp token: it {e}")),
    };
    let Some(imprint) = p.imprint_sha256() else {
        return bad(format!(
            "{name} stamps a hash of another kind ({}), not SHA-256",
            p.tst.message_imprint.hash_algorithm.oid
        ));
    };
    let got = crate::plan::canonical::hex(imprint);
    match expected {
        Some(e) if e == got => {}
        Some(e) => {
            return bad(format!(
                "{name} covers a different hash: sha256 {} is not the {}'s {}",
                short(&got),
                covers.word(),
                short(e)
            ))
        }
        None => {
            return bad(format!(
                "{name} covers data sha256 {}, but the data file cannot be read to compare",
                short(&got)
            ))
        }
    }
    // The certificate's purpose and dates first: they say precisely what
    // is wrong with a certificate whatever else is wrong with the token.
    let cert = match p.signer_cert() {
        Ok(c) => c,
        Err(e) => return bad(format!("{name}: the token {e}")),
    };
    let subject = printable(&cert.tbs_certificate.subject.to_string());
    if let Err(e) = check_purpose(cert) {
        return bad(format!(
            "{name}: the authority's certificate ({subject}) {e}"
        ));
    }
    let t = p.gen_time();
    let (from, to) = validity(cert);
    if t < from || t > to {
        return bad(format!(
            "{name}: the authority's certificate ({subject}) was not valid at the token's time {} (valid {} to {})",
            crate::lock::rfc3339_utc(t),
            crate::lock::rfc3339_utc(from),
            crate::lock::rfc3339_utc(to)
        ));
    }
    if let Err(e) = p.verify_signature() {
        return bad(format!("{name}: the token's signature {e}"));
    }
    let seen = format!(
        "{} sha256 {} seen by {subject} by {}",
        covers.word(),
        short(&got),
        crate::lock::rfc3339_utc(t)
    );
    match roots {
        None => (
            Status::Unanchored,
            seen,
            format!(
                "; unanchored: certificate sha256 {} not checked against roots you trust (pass --tsa-roots FILE)",
                short(&fingerprint(cert))
            ),
            Some(t),
        ),
        Some(r) => match chain(cert, &p.certs(), r, t) {
            Ok(root) => (
                Status::Good,
                seen,
                format!(", chained to {}", printable(&root)),
                Some(t),
            ),
            Err(e) => bad(format!(
                "{name}: the authority's certificate ({subject}) {}",
                printable(&e)
            )),
        },
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn civil_days_round_trip_with_lock_formatting() {
        for epoch in [0_i64, 951_782_400, 1_000_000_000, 1_798_761_599] {
            let s = crate::lock::rfc3339_utc(epoch);
            assert_eq!(parse_rfc3339(&s), Some(epoch), "{s}");
        }
        assert_eq!(parse_rfc3339("2026-02-30"), None);
    }

    #[test]
    fn garbage_is_not_a_token() {
        for bytes in [
            &b""[..],
            b"\x30\x03\x02\x01",
            b"not der at all",
            &[0x30, 0x84, 0xff, 0xff, 0xff, 0xff],
        ] {
            assert!(parse(bytes).is_err());
        }
    }
}
