//! RFC 3161 timestamp tokens against a real time-stamping authority:
//! Debian's `openssl ts -reply`, behind a tiny HTTP server on 127.0.0.1
//! that this file starts and stops (RFC 3161, section 3.4: a query POSTed
//! as `application/timestamp-query`). A throwaway root and authority
//! certificate are made with `openssl req` / `openssl ca`; tokens attest
//! stores are checked again with `openssl ts -verify`, and fingerprints
//! with `openssl x509` and `openssl dgst`. No test sends traffic to any
//! address but 127.0.0.1.
//!
//! The tests that drive `openssl` are `#[ignore]`d, so a plain `cargo test`
//! reports them as ignored rather than passing them silently; `.ci/run`
//! installs openssl and runs them with `--ignored`.

mod common;

use common::{case, Case};
use std::io::{Read, Write};
use std::net::TcpListener;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;
use std::time::{Duration, Instant};

fn have_openssl() -> bool {
    let found = Command::new("openssl")
        .arg("version")
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .status()
        .is_ok_and(|s| s.success());
    found
}

/// Runs openssl in `dir`; panics with its output on failure.
fn openssl(dir: &Path, args: &[&str]) -> Vec<u8> {
    let out = Command::new("openssl")
        .current_dir(dir)
        .args(args)
        .stdin(Stdio::null())
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "openssl {args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    out.stdout
}

const CA_CNF: &str = "\
[ ca ]
default_ca = local
[ local ]
dir = .
database = index.txt
new_certs_dir = .
serial = serial
default_md = sha256
policy = any
unique_subject = no
[ any ]
commonName = supplied
[ tsa_ext ]
basicConstraints = CA:FALSE
extendedKeyUsage = critical,timeStamping
[ code_ext ]
basicConstraints = CA:FALSE
extendedKeyUsage = critical,codeSigning
[ tsa1 ]
serial = tsaserial
crypto_device = builtin
signer_digest = sha256
default_policy = 1.2.3.4.1
digests = sha256
accuracy = secs:1
ordering = no
tsa_name = yes
ess_cert_id_chain = no
ess_cert_id_alg = sha256
";

/// A throwaway PKI: a root (RSA), another root nobody trusts, and one
/// authority key (ECDSA P-256) certified three ways: for time-stamping,
/// for time-stamping but expired, and for code signing.
struct Pki {
    dir: tempfile::TempDir,
}

impl Pki {
    fn new() -> Pki {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        std::fs::write(d.join("ca.cnf"), CA_CNF).unwrap();
        std::fs::write(d.join("index.txt"), "").unwrap();
        std::fs::write(d.join("serial"), "01\n").unwrap();
        std::fs::write(d.join("tsaserial"), "01\n").unwrap();
        for (key, pem, cn) in [
            ("ca.key", "ca.pem", "/CN=Loopback Test Root"),
            ("other.key", "other.pem", "/CN=Untrusted Root"),
        ] {
            openssl(
                d,
                &[
                    "req",
                    "-x509",
                    "-newkey",
                    "rsa:2048",
                    "-nodes",
                    "-keyout",
                    key,
                    "-out",
                    pem,
                    "-days",
                    "3650",
                    "-subj",
                    cn,
                    "-addext",
                    "basicConstraints=critical,CA:TRUE",
                    "-addext",
                    "keyUsage=critical,keyCertSign,cRLSign",
                ],
            );
        }
        openssl(
            d,
            &[
                "req",
                "-newkey",
                "ec",
                "-pkeyopt",
                "ec_paramgen_curve:prime256v1",
                "-nodes",
                "-keyout",
                "tsa.key",
                "-out",
                "tsa.csr",
                "-subj",
                "/CN=Loopback TSA",
            ],
        );
        let ca = |out: &str, ext: &str, dates: &[&str]| {
            let mut args = vec![
                "ca",
                "-batch",
                "-config",
                "ca.cnf",
                "-cert",
                "ca.pem",
                "-keyfile",
                "ca.key",
                "-in",
                "tsa.csr",
                "-out",
                out,
                "-extensions",
                ext,
                "-notext",
            ];
            args.extend_from_slice(dates);
            openssl(d, &args);
        };
        ca("tsa.pem", "tsa_ext", &["-days", "365"]);
        ca(
            "expired.pem",
            "tsa_ext",
            &[
                "-startdate",
                "20200101000000Z",
                "-enddate",
                "20210101000000Z",
            ],
        );
        ca("code.pem", "code_ext", &["-days", "365"]);
        Pki { dir }
    }

    fn path(&self) -> &Path {
        self.dir.path()
    }

    fn file(&self, name: &str) -> String {
        self.path().join(name).to_string_lossy().into_owned()
    }

    /// A token from `openssl ts -reply`, signed with `signer`, over a
    /// SHA-256 given in hex.
    fn token(&self, signer: &str, digest_hex: &str) -> Vec<u8> {
        let d = self.path();
        openssl(
            d,
            &[
                "ts", "-query", "-digest", digest_hex, "-sha256", "-cert", "-out", "q.tsq",
            ],
        );
        openssl(
            d,
            &[
                "ts",
                "-reply",
                "-config",
                "ca.cnf",
                "-section",
                "tsa1",
                "-queryfile",
                "q.tsq",
                "-signer",
                signer,
                "-inkey",
                "tsa.key",
                "-token_out",
                "-out",
                "t.tst",
            ],
        );
        std::fs::read(d.join("t.tst")).unwrap()
    }
}

/// What the loopback server answers.
#[derive(Clone, Copy)]
enum Answer {
    /// `openssl ts -reply` with this signer certificate.
    Reply(&'static str),
    /// 200 with a body that is not a timestamp response.
    Junk,
}

/// A time-stamping authority on 127.0.0.1, stopped when dropped.
struct Tsa {
    url: String,
    stop: Arc<AtomicBool>,
    thread: Option<std::thread::JoinHandle<()>>,
}

impl Tsa {
    fn start(pki: &Pki, answer: Answer) -> Tsa {
        let listener = TcpListener::bind("127.0.0.1:0").unwrap();
        listener.set_nonblocking(true).unwrap();
        let url = format!("http://{}/", listener.local_addr().unwrap());
        let stop = Arc::new(AtomicBool::new(false));
        let dir = pki.path().to_path_buf();
        let flag = stop.clone();
        let thread = std::thread::spawn(move || {
            let started = Instant::now();
            // Bounded: stops when told, and after two minutes regardless.
            while !flag.load(Ordering::SeqCst) && started.elapsed() < Duration::from_secs(120) {
                match listener.accept() {
                    Ok((stream, _)) => serve(stream, &dir, answer),
                    Err(_) => std::thread::sleep(Duration::from_millis(10)),
                }
            }
        });
        Tsa {
            url,
            stop,
            thread: Some(thread),
        }
    }
}

impl Drop for Tsa {
    fn drop(&mut self) {
        self.stop.store(true, Ordering::SeqCst);
        if let Some(t) = self.thread.take() {
            let _ = t.join();
        }
    }
}

/// Answers one HTTP request: the body is piped through `openssl ts -reply`.
fn serve(mut stream: std::net::TcpStream, dir: &Path, answer: Answer) {
    stream.set_nonblocking(false).unwrap();
    stream
        .set_read_timeout(Some(Duration::from_secs(10)))
        .unwrap();
    let mut buf = Vec::new();
    let mut chunk = [0u8; 4096];
    let head_end = loop {
        let n = stream.read(&mut chunk).unwrap_or(0);
        if n == 0 {
            return;
        }
        buf.extend_from_slice(&chunk[..n]);
        if let Some(i) = buf.windows(4).position(|w| w == b"\r\n\r\n") {
            break i + 4;
        }
        if buf.len() > 65_536 {
            return;
        }
    };
    let head = String::from_utf8_lossy(&buf[..head_end]).to_ascii_lowercase();
    let len: usize = head
        .lines()
        .find_map(|l| l.strip_prefix("content-length:"))
        .and_then(|v| v.trim().parse().ok())
        .unwrap_or(0);
    while buf.len() < head_end + len {
        let n = stream.read(&mut chunk).unwrap_or(0);
        if n == 0 {
            return;
        }
        buf.extend_from_slice(&chunk[..n]);
    }
    let body = match answer {
        Answer::Junk => b"this is not a timestamp response".to_vec(),
        Answer::Reply(signer) => {
            std::fs::write(dir.join("served.tsq"), &buf[head_end..head_end + len]).unwrap();
            openssl(
                dir,
                &[
                    "ts",
                    "-reply",
                    "-config",
                    "ca.cnf",
                    "-section",
                    "tsa1",
                    "-queryfile",
                    "served.tsq",
                    "-signer",
                    signer,
                    "-inkey",
                    "tsa.key",
                    "-out",
                    "served.tsr",
                ],
            );
            std::fs::read(dir.join("served.tsr")).unwrap()
        }
    };
    let _ = write!(
        stream,
        "HTTP/1.1 200 OK\r\nContent-Type: application/timestamp-reply\r\nContent-Length: {}\r\nConnection: close\r\n\r\n",
        body.len()
    );
    let _ = stream.write_all(&body);
}

fn stdout(a: &assert_cmd::assert::Assert) -> String {
    String::from_utf8_lossy(&a.get_output().stdout).into_owned()
}

fn stderr(a: &assert_cmd::assert::Assert) -> String {
    String::from_utf8_lossy(&a.get_output().stderr).into_owned()
}

/// The text after the item name on the verify line for `what`.
fn line(out: &str, what: &str) -> String {
    out.lines()
        .find(|l| l.trim_start().starts_with(&format!("{what}  ")))
        .unwrap_or_else(|| panic!("no `{what}` line in:\n{out}"))
        .trim_start()[what.len()..]
        .trim_start()
        .to_string()
}

fn plan_hash(c: &Case) -> String {
    let v: serde_json::Value = serde_json::from_str(&c.read("sleep.lock")).unwrap();
    v["plan_sha256"].as_str().unwrap().to_string()
}

/// `openssl dgst -sha256` of a file, in hex.
fn openssl_sha256(path: &Path) -> String {
    let out = openssl(
        path.parent().unwrap(),
        &["dgst", "-sha256", "-r", &path.to_string_lossy()],
    );
    String::from_utf8_lossy(&out)
        .split_whitespace()
        .next()
        .unwrap()
        .to_string()
}

/// The SHA-256 of a PEM certificate's DER, by openssl.
fn cert_fingerprint(pki: &Pki, pem: &str) -> String {
    openssl(
        pki.path(),
        &["x509", "-in", pem, "-outform", "DER", "-out", "cert.der"],
    );
    openssl_sha256(&pki.path().join("cert.der"))
}

fn openssl_accepts(pki: &Pki, token: &Path, digest: &str) {
    let out = openssl(
        pki.path(),
        &[
            "ts",
            "-verify",
            "-digest",
            digest,
            "-in",
            &token.to_string_lossy(),
            "-token_in",
            "-CAfile",
            "ca.pem",
        ],
    );
    assert!(String::from_utf8_lossy(&out).contains("Verification: OK"));
}

#[test]
#[ignore = "needs openssl (apt-get install openssl); .ci/run runs it with --ignored"]
fn stamp_lock_run_and_verify_against_a_loopback_authority() {
    assert!(
        have_openssl(),
        "this test drives openssl: apt-get install openssl"
    );
    let pki = Pki::new();
    let tsa = Tsa::start(&pki, Answer::Reply("tsa.pem"));
    let c = case("sleep");

    let a = c
        .attest(&["lock", "sleep.toml", "--tsa", &tsa.url])
        .success();
    assert!(
        stdout(&a).contains(&format!(
            "stamped: sleep.plan-stamp-1.tst by {} at ",
            tsa.url
        )),
        "{}",
        stdout(&a)
    );
    let hash = plan_hash(&c);
    openssl_accepts(&pki, &c.path().join("sleep.plan-stamp-1.tst"), &hash);

    // A second authority later: the lock's bytes do not change.
    let lock_before = c.read("sleep.lock");
    let a = c
        .attest(&["stamp", "sleep.lock", "--tsa", &tsa.url])
        .success();
    assert!(stdout(&a).starts_with(&format!(
        "stamped: sleep.plan-stamp-2.tst by {} at ",
        tsa.url
    )));
    assert_eq!(c.read("sleep.lock"), lock_before);
    openssl_accepts(&pki, &c.path().join("sleep.plan-stamp-2.tst"), &hash);

    // The first run stamps the data's SHA-256.
    let a = c
        .attest(&["run", "--quiet", "sleep.toml", "--tsa", &tsa.url])
        .success();
    assert!(stderr(&a).starts_with("stamped: sleep.data-stamp-1.tst by "));
    let data_hash = openssl_sha256(&c.path().join("sleep.csv"));
    openssl_accepts(&pki, &c.path().join("sleep.data-stamp-1.tst"), &data_hash);

    // The report and results.json list each token, with what it shows.
    let report = c.read("out/sleep/report.md");
    for (file, covers) in [
        ("sleep.plan-stamp-1.tst", "plan"),
        ("sleep.plan-stamp-2.tst", "plan"),
        ("sleep.data-stamp-1.tst", "data"),
    ] {
        assert!(
            report.contains(&format!("- {file}: The time-stamping authority CN=Loopback TSA saw this {covers} hash by 20")),
            "{report}"
        );
    }
    assert!(report.contains(
        "this shows it existed by then, not that the plan was written before the data were seen."
    ));
    let results: serde_json::Value =
        serde_json::from_str(&c.read("out/sleep/results.json")).unwrap();
    let ev = results["lock_record"]["evidence"].as_array().unwrap();
    assert_eq!(ev.len(), 3);
    assert_eq!(ev[0]["kind"], "timestamp");
    assert_eq!(ev[0]["by"], "CN=Loopback TSA");
    assert_eq!(ev[0]["covers"], format!("plan sha256 {hash}"));
    assert_eq!(ev[2]["covers"], format!("data sha256 {data_hash}"));

    // A stamp added after the run is checked, and the report still
    // reproduces.
    c.attest(&["stamp", "sleep.lock", "--tsa", &tsa.url])
        .success();

    // Anchored in the root the user trusts.
    let a = c
        .attest(&["verify", "out/sleep", "--tsa-roots", &pki.file("ca.pem")])
        .success();
    let out = stdout(&a);
    for (what, covers, h, base) in [
        ("plan stamp 1", "plan", &hash, "the lock's own time"),
        ("plan stamp 2", "plan", &hash, "the lock's own time"),
        ("plan stamp 3", "plan", &hash, "the lock's own time"),
        ("data stamp 1", "data", &data_hash, "the first plan stamp"),
    ] {
        let l = line(&out, what);
        let start = format!("{covers} sha256 {} seen by CN=Loopback TSA by 20", &h[..12]);
        assert!(l.starts_with(&start), "{l}");
        assert!(l.contains(&format!(" after {base})")), "{l}");
        assert!(l.ends_with(", chained to CN=Loopback Test Root"), "{l}");
    }
    assert!(out.ends_with("the report reproduces\n"), "{out}");

    // Without roots: checked, but said to be unanchored, with the
    // certificate's fingerprint as openssl computes it.
    let a = c.attest(&["verify", "out/sleep"]).success();
    let fp = cert_fingerprint(&pki, "tsa.pem");
    let l = line(&stdout(&a), "plan stamp 1");
    assert!(
        l.ends_with(&format!(
            "; unanchored: certificate sha256 {} not checked against roots you trust (pass --tsa-roots FILE)",
            &fp[..12]
        )),
        "{l}"
    );
}

/// A locked, run case with one hand-made token as plan stamp 1; returns
/// the verify line for it (exit 2 expected).
fn verdict(pki: &Pki, token: &[u8], roots: &str) -> String {
    let c = case("sleep");
    c.attest(&["lock", "sleep.toml"]).success();
    c.attest(&["run", "--quiet", "sleep.toml"]).success();
    std::fs::write(c.path().join("sleep.plan-stamp-1.tst"), token).unwrap();
    let a = c
        .attest(&["verify", "out/sleep", "--tsa-roots", &pki.file(roots)])
        .code(2);
    let out = stdout(&a);
    assert!(out.ends_with("the report does NOT reproduce\n"), "{out}");
    line(&out, "plan stamp 1")
}

/// The plan hash of the `sleep` case, as a lock of it records.
fn sleep_plan_hash() -> String {
    let c = case("sleep");
    c.attest(&["lock", "sleep.toml"]).success();
    plan_hash(&c)
}

#[test]
#[ignore = "needs openssl (apt-get install openssl); .ci/run runs it with --ignored"]
fn each_bad_token_is_reported_precisely() {
    assert!(
        have_openssl(),
        "this test drives openssl: apt-get install openssl"
    );
    let pki = Pki::new();
    let hash = sleep_plan_hash();
    let good = pki.token("tsa.pem", &hash);

    // A token over a different hash.
    let other = "ab".repeat(32);
    assert_eq!(
        verdict(&pki, &pki.token("tsa.pem", &other), "ca.pem"),
        format!(
            "changed: sleep.plan-stamp-1.tst covers a different hash: sha256 {} is not the plan's {}",
            &other[..12],
            &hash[..12]
        )
    );

    // An expired authority certificate.
    let l = verdict(&pki, &pki.token("expired.pem", &hash), "ca.pem");
    assert!(
        l.starts_with("changed: sleep.plan-stamp-1.tst: the authority's certificate (CN=Loopback TSA) was not valid at the token's time ")
            && l.ends_with("(valid 2020-01-01T00:00:00Z to 2021-01-01T00:00:00Z)"),
        "{l}"
    );

    // A certificate for code signing: openssl ts refuses to sign with it,
    // so the token is made with `openssl cms -sign` over a real TSTInfo.
    std::fs::write(pki.path().join("good.tst"), &good).unwrap();
    openssl(
        pki.path(),
        &[
            "cms",
            "-verify",
            "-noverify",
            "-in",
            "good.tst",
            "-inform",
            "DER",
            "-out",
            "tstinfo.der",
        ],
    );
    openssl(
        pki.path(),
        &[
            "cms",
            "-sign",
            "-binary",
            "-nodetach",
            "-in",
            "tstinfo.der",
            "-econtent_type",
            "1.2.840.113549.1.9.16.1.4",
            "-signer",
            "code.pem",
            "-inkey",
            "tsa.key",
            "-md",
            "sha256",
            "-outform",
            "DER",
            "-out",
            "code.tst",
            "-nosmimecap",
        ],
    );
    let code = std::fs::read(pki.path().join("code.tst")).unwrap();
    assert_eq!(
        verdict(&pki, &code, "ca.pem"),
        "changed: sleep.plan-stamp-1.tst: the authority's certificate (CN=Loopback TSA) is not for time-stamping only (its extended key usage is 1.3.6.1.5.5.7.3.3)"
    );

    // A tampered token: the policy in the signed TSTInfo (1.2.3.4.1, as
    // ca.cnf sets it) changed to 1.2.3.4.2.
    let mut tampered = good.clone();
    let at = tampered
        .windows(6)
        .position(|w| w == [0x06, 0x04, 0x2a, 0x03, 0x04, 0x01])
        .expect("the policy OID in the token")
        + 5;
    tampered[at] = 0x02;
    assert_eq!(
        verdict(&pki, &tampered, "ca.pem"),
        "changed: sleep.plan-stamp-1.tst: the token's signature does not cover this timestamp: the timestamp was altered"
    );

    // A sound token under a root the user does not trust.
    assert_eq!(
        verdict(&pki, &good, "other.pem"),
        "changed: sleep.plan-stamp-1.tst: the authority's certificate (CN=Loopback TSA) does not chain to a root you trust (its issuer is CN=Loopback Test Root)"
    );

    // Truncated, and a file that is no token at all.
    let l = verdict(&pki, &good[..good.len() / 2], "ca.pem");
    assert!(
        l.starts_with(
            "changed: sleep.plan-stamp-1.tst is not a usable timestamp token: it cannot be read ("
        ),
        "{l}"
    );
    let l = verdict(&pki, b"-----BEGIN SSH SIGNATURE-----\n", "ca.pem");
    assert!(
        l.starts_with(
            "changed: sleep.plan-stamp-1.tst is not a usable timestamp token: it cannot be read ("
        ),
        "{l}"
    );
}

#[test]
#[ignore = "needs openssl (apt-get install openssl); .ci/run runs it with --ignored"]
fn a_lock_dated_after_its_stamp_is_inconsistent() {
    assert!(
        have_openssl(),
        "this test drives openssl: apt-get install openssl"
    );
    let pki = Pki::new();
    let tsa = Tsa::start(&pki, Answer::Reply("tsa.pem"));
    let c = case("sleep");
    // The author's clock says 2100; the authority's says now.
    assert_cmd::Command::cargo_bin("attest")
        .unwrap()
        .current_dir(c.path())
        .env("SOURCE_DATE_EPOCH", "4102444800")
        .args(["lock", "sleep.toml", "--tsa", &tsa.url])
        .assert()
        .success();
    c.attest(&["run", "--quiet", "sleep.toml"]).success();
    let a = c
        .attest(&["verify", "out/sleep", "--tsa-roots", &pki.file("ca.pem")])
        .code(2);
    let l = line(&stdout(&a), "plan stamp 1");
    assert!(l.starts_with("changed: plan sha256 "), "{l}");
    assert!(
        l.contains(" days before the lock's own time 2100-01-01T00:00:00Z: the lock's time is not what the authority saw, chained to CN=Loopback Test Root"),
        "{l}"
    );
}

#[test]
#[ignore = "needs openssl (apt-get install openssl); .ci/run runs it with --ignored"]
fn no_authority_no_change() {
    assert!(
        have_openssl(),
        "this test drives openssl: apt-get install openssl"
    );
    let c = case("sleep");
    c.attest(&["lock", "sleep.toml"]).success();
    let lock = c.read("sleep.lock");
    let files = |c: &Case| -> Vec<PathBuf> {
        let mut v: Vec<_> = std::fs::read_dir(c.path())
            .unwrap()
            .map(|e| e.unwrap().path())
            .collect();
        v.sort();
        v
    };
    let before = files(&c);

    // A closed port on 127.0.0.1: bound, then released.
    let closed = {
        let l = TcpListener::bind("127.0.0.1:0").unwrap();
        format!("http://{}/", l.local_addr().unwrap())
    };
    let a = c.attest(&["stamp", "sleep.lock", "--tsa", &closed]).code(1);
    let err = stderr(&a);
    assert!(
        err.starts_with(&format!(
            "error: cannot reach the time-stamping authority {closed}: "
        )),
        "{err}"
    );
    assert!(err.ends_with(
        "\nhelp: check the address and the network; nothing was written, and the lock stays usable without a stamp\n"
    ));

    // An authority that answers with something else.
    let pki = Pki::new();
    let junk = Tsa::start(&pki, Answer::Junk);
    let a = c
        .attest(&["stamp", "sleep.lock", "--tsa", &junk.url])
        .code(1);
    assert!(
        stderr(&a).starts_with(&format!(
            "error: the time-stamping authority {} sent something that is not a timestamp response (",
            junk.url
        )),
        "{}",
        stderr(&a)
    );

    // HTTPS is refused before any connection.
    c.attest(&["stamp", "sleep.lock", "--tsa", "https://127.0.0.1:9/"])
        .code(1)
        .stderr(
            "error: https://127.0.0.1:9/: this build of attest asks authorities over plain HTTP only\n\
             help: use the authority's http:// address; the token is signed by the authority, so HTTPS adds nothing to what it proves\n",
        );

    // All or nothing: one good and one unreachable authority store nothing.
    let good = Tsa::start(&pki, Answer::Reply("tsa.pem"));
    c.attest(&["stamp", "sleep.lock", "--tsa", &good.url, "--tsa", &closed])
        .code(1);
    assert_eq!(files(&c), before);
    assert_eq!(c.read("sleep.lock"), lock);

    // The lock without stamps stays fully usable, and verify without
    // --tsa-roots says nothing about stamps; with roots, the missing stamp
    // is its own line.
    c.attest(&["run", "--quiet", "sleep.toml"]).success();
    let a = c.attest(&["verify", "out/sleep"]).success();
    assert!(!stdout(&a).contains("stamp"), "{}", stdout(&a));
    let a = c
        .attest(&["verify", "out/sleep", "--tsa-roots", &pki.file("ca.pem")])
        .code(2);
    assert_eq!(
        line(&stdout(&a), "plan stamp"),
        "changed: missing: no timestamp token beside sleep.lock (expected sleep.plan-stamp-1.tst)"
    );

    // Data stamps alone do not stand in for the missing plan stamp.
    c.attest(&["run", "--quiet", "sleep.toml", "--tsa", &good.url])
        .success();
    let a = c
        .attest(&["verify", "out/sleep", "--tsa-roots", &pki.file("ca.pem")])
        .code(2);
    assert_eq!(
        line(&stdout(&a), "plan stamp"),
        "changed: missing: no timestamp token beside sleep.lock (expected sleep.plan-stamp-1.tst)"
    );
    assert!(line(&stdout(&a), "data stamp 1").starts_with("data sha256 "));

    // `lock --tsa` with an unreachable authority writes no lock.
    let fresh = case("sleep");
    fresh
        .attest(&["lock", "sleep.toml", "--tsa", &closed])
        .code(1);
    assert!(!fresh.exists("sleep.lock"));
    assert!(!fresh.exists("out"));
}

/// Every single-byte change of a sound token, read offline from a hostile
/// folder: never a panic, and each one is either refused (a `Bad` line) or
/// changes a part of the token that nothing rests on, leaving the same
/// sentence as the sound token.
#[test]
#[ignore = "needs openssl (apt-get install openssl); .ci/run runs it with --ignored"]
fn no_single_byte_change_of_a_token_panics_or_passes_as_another() {
    assert!(
        have_openssl(),
        "this test drives openssl: apt-get install openssl"
    );
    use attest::seal::{check_all, Options, Status};
    let pki = Pki::new();
    let c = case("sleep");
    c.attest(&["lock", "sleep.toml"]).success();
    let good = pki.token("tsa.pem", &plan_hash(&c));
    let lock = c.path().join("sleep.lock");
    let token = c.path().join("sleep.plan-stamp-1.tst");
    let options = Options {
        signers: None,
        tsa_roots: Some(pki.path().join("ca.pem")),
    };
    std::fs::write(&token, &good).unwrap();
    let sound = check_all(&lock, &options).unwrap();
    assert_eq!(sound.len(), 1);
    assert_eq!(sound[0].status, Status::Good, "{sound:?}");
    let mut refused = 0;
    for i in 0..good.len() {
        let mut t = good.clone();
        t[i] ^= 0x01;
        std::fs::write(&token, &t).unwrap();
        let found = check_all(&lock, &options).unwrap();
        assert_eq!(found.len(), 1, "byte {i}");
        if found[0].status == Status::Bad {
            refused += 1;
        } else {
            assert_eq!(found, sound, "byte {i} changed what the token says");
        }
    }
    // Nearly every byte is signed or names what was signed.
    assert!(refused * 10 > good.len() * 9, "{refused} of {}", good.len());
}

/// A report that lists a stamp which is not beside the lock does not
/// verify: the evidence a report claims is checked, not copied.
#[test]
fn a_report_cannot_claim_a_stamp_it_does_not_have() {
    let c = case("sleep");
    c.attest(&["lock", "sleep.toml"]).success();
    c.attest(&["run", "--quiet", "sleep.toml"]).success();
    let mut results: serde_json::Value =
        serde_json::from_str(&c.read("out/sleep/results.json")).unwrap();
    results["lock_record"]["evidence"] = serde_json::json!([{
        "kind": "timestamp",
        "file": "sleep.plan-stamp-1.tst",
        "covers": "plan sha256 0",
        "by": "CN=Nobody",
        "time": "2020-01-01T00:00:00Z",
        "shows": "The time-stamping authority CN=Nobody saw this plan hash by 2020-01-01T00:00:00Z."
    }]);
    c.write("out/sleep/results.json", &results.to_string());
    let a = c.attest(&["verify", "out/sleep"]).code(2);
    assert_eq!(
        line(&stdout(&a), "evidence"),
        "changed: the report lists sleep.plan-stamp-1.tst, which is not sound evidence beside the lock"
    );
}
