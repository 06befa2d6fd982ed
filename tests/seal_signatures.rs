//! Signed locks against the real OpenSSH tools (Debian's `openssh-client`):
//! `ssh-keygen -Y verify` must accept what `attest lock --sign` and
//! `attest sign` write, and `attest verify --signers` must accept what
//! `ssh-keygen -Y sign -n attest-lock` writes, and refuse, each on its own
//! line, a signature that is missing, made for another namespace, made over
//! another file, truncated, or made by a key the allowed-signers file does
//! not list (formats: OpenSSH `PROTOCOL.sshsig`; ssh-keygen(1), ALLOWED
//! SIGNERS).
//!
//! The tests that drive `ssh-keygen` are `#[ignore]`d, so a plain `cargo
//! test` reports them as ignored rather than passing them silently;
//! `.ci/run` installs openssh-client and runs them with `--ignored`.

mod common;

use common::{case, Case};
use std::process::{Command, Stdio};

fn have_ssh_keygen() -> bool {
    let found = Command::new("ssh-keygen")
        .arg("-?")
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .status()
        .is_ok();
    found
}

/// Runs ssh-keygen in the case folder; returns (success, stdout+stderr).
fn ssh_keygen(c: &Case, args: &[&str], stdin: Option<&str>) -> (bool, String) {
    let mut cmd = Command::new("ssh-keygen");
    cmd.current_dir(c.path()).args(args);
    if let Some(path) = stdin {
        cmd.stdin(std::fs::File::open(c.path().join(path)).unwrap());
    } else {
        cmd.stdin(Stdio::null());
    }
    let out = cmd.output().unwrap();
    let text = format!(
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    (out.status.success(), text)
}

/// A fresh key pair without a passphrase, named `name`.
fn keygen(c: &Case, kind: &str, name: &str) {
    let (ok, text) = ssh_keygen(
        c,
        &["-q", "-t", kind, "-N", "", "-C", name, "-f", name],
        None,
    );
    assert!(ok, "{text}");
}

/// The `SHA256:…` fingerprint ssh-keygen shows for a public key.
fn fingerprint(c: &Case, pubkey: &str) -> String {
    let (ok, text) = ssh_keygen(c, &["-l", "-E", "sha256", "-f", pubkey], None);
    assert!(ok, "{text}");
    text.split_whitespace().nth(1).unwrap().to_string()
}

fn allow(c: &Case, file: &str, lines: &[(&str, &str)]) {
    let body: String = lines
        .iter()
        .map(|(who, key)| format!("{who} {}", c.read(&format!("{key}.pub"))))
        .collect();
    c.write(file, &body);
}

fn stdout(a: &assert_cmd::assert::Assert) -> String {
    String::from_utf8_lossy(&a.get_output().stdout).into_owned()
}

fn signature_line(out: &str) -> String {
    out.lines()
        .find(|l| l.trim_start().starts_with("signature "))
        .unwrap_or_else(|| panic!("no signature line in:\n{out}"))
        .split_whitespace()
        .skip(1)
        .collect::<Vec<_>>()
        .join(" ")
}

#[test]
#[ignore = "needs ssh-keygen (apt-get install openssh-client); .ci/run runs it with --ignored"]
fn ssh_keygen_accepts_what_attest_signs() {
    assert!(
        have_ssh_keygen(),
        "this test drives ssh-keygen: apt-get install openssh-client"
    );
    for kind in ["ed25519", "ecdsa", "rsa"] {
        let c = case("sleep");
        keygen(&c, kind, "alice");
        let a = c
            .attest(&["lock", "sleep.toml", "--sign", "alice"])
            .success();
        let fp = fingerprint(&c, "alice.pub");
        assert!(
            stdout(&a).contains("signed: sleep.lock.sig with "),
            "{}",
            stdout(&a)
        );
        assert!(stdout(&a).contains(&fp), "{kind}: {}", stdout(&a));
        allow(&c, "allowed", &[("alice@example.org", "alice")]);
        if kind == "ed25519" {
            // The report lists the signature with what it shows.
            c.attest(&["run", "--quiet", "sleep.toml"]).success();
            assert!(c.read("out/sleep/report.md").contains(&format!(
                "- sleep.lock.sig: The holder of the ssh-ed25519 key {fp} signed this lock file; this does not show when it was signed."
            )));
        }
        let (ok, text) = ssh_keygen(
            &c,
            &[
                "-Y",
                "verify",
                "-f",
                "allowed",
                "-I",
                "alice@example.org",
                "-n",
                "attest-lock",
                "-s",
                "sleep.lock.sig",
            ],
            Some("sleep.lock"),
        );
        assert!(ok, "{kind}: {text}");
        assert!(
            text.contains("Good \"attest-lock\" signature for alice@example.org"),
            "{kind}: {text}"
        );
        // The signature is bound to the namespace: ssh-keygen refuses it
        // for any other purpose.
        let (ok, _) = ssh_keygen(
            &c,
            &[
                "-Y",
                "verify",
                "-f",
                "allowed",
                "-I",
                "alice@example.org",
                "-n",
                "git",
                "-s",
                "sleep.lock.sig",
            ],
            Some("sleep.lock"),
        );
        assert!(
            !ok,
            "{kind}: ssh-keygen accepted the signature for namespace git"
        );
    }
}

#[test]
#[ignore = "needs ssh-keygen (apt-get install openssh-client); .ci/run runs it with --ignored"]
fn attest_verifies_what_ssh_keygen_signs() {
    assert!(
        have_ssh_keygen(),
        "this test drives ssh-keygen: apt-get install openssh-client"
    );
    for kind in ["ed25519", "ecdsa", "rsa"] {
        let c = case("sleep");
        keygen(&c, kind, "alice");
        c.attest(&["lock", "sleep.toml"]).success();
        let (ok, text) = ssh_keygen(
            &c,
            &[
                "-Y",
                "sign",
                "-q",
                "-f",
                "alice",
                "-n",
                "attest-lock",
                "sleep.lock",
            ],
            None,
        );
        assert!(ok, "{text}");
        c.attest(&["run", "--quiet", "sleep.toml"]).success();
        allow(&c, "allowed", &[("alice@example.org", "alice")]);
        let a = c
            .attest(&["verify", "out/sleep", "--signers", "allowed"])
            .success();
        let key_type = match kind {
            "ed25519" => "ssh-ed25519",
            "ecdsa" => "ecdsa-sha2-nistp256",
            _ => "ssh-rsa",
        };
        assert_eq!(
            signature_line(&stdout(&a)),
            format!(
                "signed by alice@example.org ({key_type} key {})",
                fingerprint(&c, "alice.pub")
            )
        );
        // Without a list of signers the signature is checked but reported
        // as not anchored.
        let a = c.attest(&["verify", "out/sleep"]).success();
        assert_eq!(
            signature_line(&stdout(&a)),
            format!(
                "made by {key_type} key {}, not checked against allowed signers (pass --signers FILE)",
                fingerprint(&c, "alice.pub")
            )
        );
    }
}

/// A signed, run analysis with two keys: alice signed, bob did not.
fn signed_case() -> Case {
    let c = case("sleep");
    keygen(&c, "ed25519", "alice");
    keygen(&c, "ed25519", "bob");
    c.attest(&["lock", "sleep.toml", "--sign", "alice"])
        .success();
    c.attest(&["run", "--quiet", "sleep.toml"]).success();
    c
}

fn failed_signature(c: &Case, signers: &str) -> String {
    let a = c
        .attest(&["verify", "out/sleep", "--signers", signers])
        .code(2);
    let out = stdout(&a);
    assert!(out.ends_with("the report does NOT reproduce\n"), "{out}");
    signature_line(&out)
}

#[test]
#[ignore = "needs ssh-keygen (apt-get install openssh-client); .ci/run runs it with --ignored"]
fn each_bad_signature_is_its_own_line() {
    assert!(
        have_ssh_keygen(),
        "this test drives ssh-keygen: apt-get install openssh-client"
    );
    let c = signed_case();
    let alice = fingerprint(&c, "alice.pub");

    // An unknown signer: the list names only bob.
    allow(&c, "only-bob", &[("bob@example.org", "bob")]);
    assert_eq!(
        failed_signature(&c, "only-bob"),
        format!("changed: made by ssh-ed25519 key {alice}, which only-bob does not allow to sign attest locks")
    );

    // A signer allowed only for another namespace.
    c.write(
        "git-only",
        &format!(
            "alice@example.org namespaces=\"git\" {}",
            c.read("alice.pub")
        ),
    );
    assert_eq!(
        failed_signature(&c, "git-only"),
        format!("changed: made by ssh-ed25519 key {alice}, which git-only does not allow to sign attest locks")
    );

    allow(&c, "allowed", &[("alice@example.org", "alice")]);
    let sig = c.read("sleep.lock.sig");

    // Truncated.
    c.write("sleep.lock.sig", &sig[..sig.len() / 2]);
    assert!(
        failed_signature(&c, "allowed")
            .starts_with("changed: sleep.lock.sig is not a readable SSH signature ("),
        "{}",
        failed_signature(&c, "allowed")
    );

    // Made for another purpose: ssh-keygen's own file namespace.
    std::fs::remove_file(c.path().join("sleep.lock.sig")).unwrap();
    let (ok, text) = ssh_keygen(
        &c,
        &[
            "-Y",
            "sign",
            "-q",
            "-f",
            "alice",
            "-n",
            "file",
            "sleep.lock",
        ],
        None,
    );
    assert!(ok, "{text}");
    assert_eq!(
        failed_signature(&c, "allowed"),
        "changed: made for another purpose (namespace \"file\"), not as a signature of an attest lock"
    );

    // Made over another file (the plan, not the lock).
    std::fs::remove_file(c.path().join("sleep.lock.sig")).unwrap();
    let (ok, text) = ssh_keygen(
        &c,
        &[
            "-Y",
            "sign",
            "-q",
            "-f",
            "alice",
            "-n",
            "attest-lock",
            "sleep.toml",
        ],
        None,
    );
    assert!(ok, "{text}");
    std::fs::rename(
        c.path().join("sleep.toml.sig"),
        c.path().join("sleep.lock.sig"),
    )
    .unwrap();
    assert_eq!(
        failed_signature(&c, "allowed"),
        format!("changed: does not verify: the lock is not the file that ssh-ed25519 key {alice} signed")
    );

    // Missing.
    std::fs::remove_file(c.path().join("sleep.lock.sig")).unwrap();
    assert_eq!(
        failed_signature(&c, "allowed"),
        "changed: missing: sleep.lock.sig does not exist"
    );
}

#[test]
#[ignore = "needs ssh-keygen (apt-get install openssh-client); .ci/run runs it with --ignored"]
fn allowed_signers_in_the_wrong_format_is_bad_input() {
    assert!(
        have_ssh_keygen(),
        "this test drives ssh-keygen: apt-get install openssh-client"
    );
    let c = signed_case();
    // An authorized_keys-style line: a key with no principal before it.
    c.write("keys", &c.read("alice.pub"));
    c.attest(&["verify", "out/sleep", "--signers", "keys"])
        .code(1)
        .stdout("")
        .stderr(
            "error: keys:1:1: this line starts with a key type, not with who the key belongs to (is this an authorized_keys or .pub file?)\n\
             help: each line reads `PRINCIPALS [OPTIONS] KEYTYPE BASE64-KEY`, e.g. `alice@example.org ssh-ed25519 AAAA…` (ssh-keygen(1), ALLOWED SIGNERS)\n",
        );
    c.write(
        "keys",
        "# signers\nalice@example.org ssh-ed25519 AAAAnot-base64!\n",
    );
    let a = c
        .attest(&["verify", "out/sleep", "--signers", "keys"])
        .code(1);
    let err = String::from_utf8_lossy(&a.get_output().stderr).into_owned();
    assert!(
        err.starts_with("error: keys:2:31: the ssh-ed25519 key cannot be read ("),
        "{err}"
    );
    c.write(
        "keys",
        "alice@example.org valid-after=\"20260101\" ssh-ed25519 AAAA\n",
    );
    let out = c
        .attest(&["verify", "out/sleep", "--signers", "keys"])
        .code(1);
    let err = String::from_utf8_lossy(&out.get_output().stderr).into_owned();
    assert!(
        err.starts_with(
            "error: keys:1:19: `20260101` is not a time attest reads; write YYYYMMDD[HHMM[SS]]Z in UTC, e.g. 20260131Z\n"
        ),
        "{err}"
    );
}

#[test]
#[ignore = "needs ssh-keygen (apt-get install openssh-client); .ci/run runs it with --ignored"]
fn a_key_attest_cannot_use_leaves_nothing_behind() {
    assert!(
        have_ssh_keygen(),
        "this test drives ssh-keygen: apt-get install openssh-client"
    );
    let c = case("sleep");
    let (ok, text) = ssh_keygen(
        &c,
        &[
            "-q",
            "-t",
            "ed25519",
            "-N",
            "a passphrase",
            "-f",
            "locked-key",
        ],
        None,
    );
    assert!(ok, "{text}");
    // No terminal: the passphrase is not asked for, and nothing is written.
    c.attest(&["lock", "sleep.toml", "--sign", "locked-key"])
        .code(1)
        .stdout("")
        .stderr(
            "error: locked-key is protected by a passphrase, and attest asks for a passphrase only on a terminal\n\
             help: run the command in a terminal, where attest asks for the passphrase (it is never stored); nothing was written\n",
        );
    assert!(!c.exists("sleep.lock"));
    assert!(!c.exists("out"));
    c.attest(&["lock", "sleep.toml", "--sign", "locked-key.pub"])
        .code(1)
        .stderr(
            "error: locked-key.pub is not an OpenSSH private key\n\
             help: this is a public key; name the private key beside it (the same name without .pub)\n",
        );
    assert!(!c.exists("sleep.lock"));
}

#[test]
#[ignore = "needs ssh-keygen (apt-get install openssh-client); .ci/run runs it with --ignored"]
fn sign_never_overwrites_a_signature() {
    assert!(
        have_ssh_keygen(),
        "this test drives ssh-keygen: apt-get install openssh-client"
    );
    let c = signed_case();
    let before = c.read("sleep.lock.sig");
    c.attest(&["sign", "sleep.lock", "--key", "bob"])
        .code(1)
        .stderr(
            "error: sleep.lock is already signed (sleep.lock.sig exists)\n\
             help: a signature is never overwritten; verify it with `attest verify --signers FILE`\n",
        );
    assert_eq!(c.read("sleep.lock.sig"), before);
    // `attest sign` on an unsigned lock: ssh-keygen accepts the result.
    std::fs::remove_file(c.path().join("sleep.lock.sig")).unwrap();
    c.attest(&["sign", "sleep.lock", "--key", "bob"]).success();
    allow(&c, "allowed", &[("bob@example.org", "bob")]);
    let (ok, text) = ssh_keygen(
        &c,
        &[
            "-Y",
            "verify",
            "-f",
            "allowed",
            "-I",
            "bob@example.org",
            "-n",
            "attest-lock",
            "-s",
            "sleep.lock.sig",
        ],
        Some("sleep.lock"),
    );
    assert!(ok, "{text}");
}

/// Every single-character change of a sound signature file: never a panic,
/// and never a signature that passes for anything but what was signed.
#[test]
#[ignore = "needs ssh-keygen (apt-get install openssh-client); .ci/run runs it with --ignored"]
fn no_single_character_change_of_a_signature_passes() {
    assert!(
        have_ssh_keygen(),
        "this test drives ssh-keygen: apt-get install openssh-client"
    );
    use attest::seal::{check_all, Options, Status};
    let c = case("sleep");
    keygen(&c, "ed25519", "alice");
    c.attest(&["lock", "sleep.toml", "--sign", "alice"])
        .success();
    allow(&c, "allowed", &[("alice@example.org", "alice")]);
    let options = Options {
        signers: Some(c.path().join("allowed")),
        tsa_roots: None,
    };
    let lock = c.path().join("sleep.lock");
    let sig_path = c.path().join("sleep.lock.sig");
    let good = std::fs::read(&sig_path).unwrap();
    let sound = check_all(&lock, &options).unwrap();
    assert_eq!(sound[0].status, Status::Good, "{sound:?}");
    for i in 0..good.len() {
        let mut s = good.clone();
        s[i] = if s[i] == b'A' { b'B' } else { b'A' };
        std::fs::write(&sig_path, &s).unwrap();
        let found = check_all(&lock, &options).unwrap();
        assert_eq!(found.len(), 1, "byte {i}");
        assert!(
            found[0].status == Status::Bad || found == sound,
            "byte {i}: {found:?}"
        );
    }
}
