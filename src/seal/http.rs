//! One HTTP POST to a time-stamping authority (RFC 3161, section 3.4).
//!
//! `ureq` is built without TLS: a timestamp token is signed by the
//! authority and checked offline, so the transport adds nothing to what
//! the token proves, and most public authorities serve plain HTTP for that
//! reason. An `https://` address is refused with a clear error rather than
//! half-supported. The response is read up to a fixed size and within a
//! fixed time, redirects are not followed, and a proxy from the
//! environment (`http_proxy`) is used except for loopback addresses.

use crate::error::{Failure, Result};
use std::time::Duration;

/// The largest response read from an authority (a token with a certificate
/// chain is a few KiB).
const MAX_RESPONSE: u64 = 1 << 20;
/// How long one request may take, connection included.
const TIMEOUT: Duration = Duration::from_secs(30);

/// An authority's address as attest prints it: without a user name,
/// password, query or fragment, which may hold an access token, and with
/// terminal controls escaped.
pub(crate) fn shown(url: &str) -> String {
    let (scheme, rest) = url.split_once("://").unwrap_or(("", url));
    let rest = rest.split(['?', '#']).next().unwrap_or("");
    let (host, path) = rest.split_once('/').unwrap_or((rest, ""));
    let host = host.rsplit_once('@').map_or(host, |(_, h)| h);
    let sep = if scheme.is_empty() { "" } else { "://" };
    let slash = if rest.contains('/') { "/" } else { "" };
    super::printable(&format!("{scheme}{sep}{host}{slash}{path}"))
}

/// Posts an RFC 3161 query and returns the body of a 200 response.
pub(crate) fn post_query(url: &str, query: &[u8]) -> Result<Vec<u8>> {
    let shown = shown(url);
    let rest = if let Some(r) = url.strip_prefix("http://") {
        r
    } else if url.starts_with("https://") {
        return Err(Failure::input(format!(
            "{shown}: this build of attest asks authorities over plain HTTP only"
        ))
        .help("use the authority's http:// address; the token is signed by the authority, so HTTPS adds nothing to what it proves"));
    } else {
        return Err(
            Failure::input(format!("{shown} is not an http:// address")).help(
                "name the time-stamping authority's address, e.g. --tsa http://tsa.example.org/",
            ),
        );
    };
    let host = rest.split(['/', '?']).next().unwrap_or("");
    let host = host.rsplit_once('@').map_or(host, |(_, h)| h);
    let loopback = host.starts_with("127.")
        || host.starts_with("[::1]")
        || host == "localhost"
        || host.starts_with("localhost:");
    let config = ureq::Agent::config_builder()
        .timeout_global(Some(TIMEOUT))
        .http_status_as_error(false)
        .max_redirects(0)
        .proxy(if loopback {
            None
        } else {
            ureq::Proxy::try_from_env()
        })
        .user_agent(concat!("attest/", env!("CARGO_PKG_VERSION")))
        .build();
    let agent: ureq::Agent = config.into();
    let unreachable = |e: ureq::Error| {
        Failure::input(format!("cannot reach the time-stamping authority {shown}: {e}"))
            .help("check the address and the network; nothing was written, and the lock stays usable without a stamp")
    };
    let mut resp = agent
        .post(url)
        .header("Content-Type", "application/timestamp-query")
        .send(query)
        .map_err(unreachable)?;
    let status = resp.status().as_u16();
    if status != 200 {
        return Err(Failure::input(format!(
            "the time-stamping authority {shown} answered HTTP {status}"
        ))
        .help("check the address (some authorities need a specific path); nothing was written"));
    }
    resp.body_mut()
        .with_config()
        .limit(MAX_RESPONSE)
        .read_to_vec()
        .map_err(unreachable)
}
