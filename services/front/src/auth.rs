//! Who is calling: bearer tokens, each naming a tenant that sees only its own batches.
//!
//! The tokens file holds one `tenant token` pair per line (`#` starts a comment). Tokens are
//! secrets: they are read from a file, compared in constant time, and never logged or echoed in an
//! error (errors name the line, never its text). Without a tokens file every caller is the one
//! anonymous tenant `""`: fit for a loopback front only.

use crate::error::FrontError;
use std::path::Path;
use std::sync::Arc;
use subtle::ConstantTimeEq;
use tonic::{Request, Status};

/// Shortest token accepted from the tokens file (bytes); a shorter one is guessable.
pub const MIN_TOKEN_BYTES: usize = 16;

/// The tenant a request was authenticated as (a request extension set by [`Authenticator`]).
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Tenant(pub Arc<str>);

impl Tenant {
    pub fn as_str(&self) -> &str {
        &self.0
    }
}

/// The tenant of a request; the anonymous tenant when no authenticator ran (in-process callers).
pub fn tenant_of<T>(request: &Request<T>) -> Tenant {
    request.extensions().get::<Tenant>().cloned().unwrap_or_default()
}

/// The known tokens.
pub struct Tokens {
    entries: Vec<(Tenant, Vec<u8>)>,
}

impl std::fmt::Debug for Tokens {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        // Never the tokens themselves.
        f.debug_struct("Tokens").field("tenants", &self.entries.len()).finish()
    }
}

impl Tokens {
    /// Parse a tokens file's text; `origin` names it in errors.
    ///
    /// # Errors
    /// A malformed line (named by number, its text never shown), a short or repeated token, a
    /// tenant name outside `[A-Za-z0-9_.-]`, or no token at all.
    pub fn parse(text: &str, origin: &str) -> Result<Tokens, FrontError> {
        let bad = |line: usize, reason: &str| FrontError::invalid("tokens file", format!("{origin}, line {line}: {reason}"));
        let mut entries: Vec<(Tenant, Vec<u8>)> = Vec::new();
        for (i, raw) in text.lines().enumerate() {
            let line = raw.split('#').next().unwrap_or("").trim();
            if line.is_empty() {
                continue;
            }
            let mut parts = line.split_whitespace();
            let (Some(tenant), Some(token), None) = (parts.next(), parts.next(), parts.next()) else {
                return Err(bad(i + 1, "expected `tenant token` (two fields)"));
            };
            if !tenant.bytes().all(|b| b.is_ascii_alphanumeric() || b"_.-".contains(&b)) {
                return Err(bad(i + 1, "a tenant name may hold only letters, digits, '_', '.' and '-'"));
            }
            if token.len() < MIN_TOKEN_BYTES {
                return Err(bad(i + 1, &format!("token shorter than {MIN_TOKEN_BYTES} characters")));
            }
            if entries.iter().any(|(_, t)| bool::from(t.as_slice().ct_eq(token.as_bytes()))) {
                return Err(bad(i + 1, "this token is already given to a tenant"));
            }
            entries.push((Tenant(tenant.into()), token.as_bytes().to_vec()));
        }
        if entries.is_empty() {
            return Err(FrontError::invalid("tokens file", format!("{origin}: no `tenant token` line")));
        }
        Ok(Tokens { entries })
    }

    /// Read a tokens file.
    ///
    /// # Errors
    /// The file cannot be read, or as for [`Tokens::parse`].
    pub fn from_file(path: &Path) -> Result<Tokens, FrontError> {
        let text = std::fs::read_to_string(path).map_err(|source| FrontError::Io {
            path: path.display().to_string(),
            source,
        })?;
        Tokens::parse(&text, &path.display().to_string())
    }

    /// The tenant holding `presented`. Every entry is compared, in constant time per entry, so
    /// the time taken does not tell which entry (or how much of one) matched.
    pub fn tenant(&self, presented: &[u8]) -> Option<Tenant> {
        let mut found = None;
        for (tenant, token) in &self.entries {
            if bool::from(token.as_slice().ct_eq(presented)) {
                found = Some(tenant.clone());
            }
        }
        found
    }

    pub fn len(&self) -> usize {
        self.entries.len()
    }

    pub fn is_empty(&self) -> bool {
        self.entries.is_empty()
    }
}

/// A tonic interceptor: with tokens, a request needs `authorization: Bearer <token>` and is
/// tagged with its [`Tenant`]; without, every request is the anonymous tenant.
#[derive(Clone, Debug, Default)]
pub struct Authenticator {
    tokens: Option<Arc<Tokens>>,
}

impl Authenticator {
    pub fn new(tokens: Option<Tokens>) -> Authenticator {
        Authenticator {
            tokens: tokens.map(Arc::new),
        }
    }
}

impl tonic::service::Interceptor for Authenticator {
    fn call(&mut self, mut request: Request<()>) -> Result<Request<()>, Status> {
        let tenant = match &self.tokens {
            None => Tenant::default(),
            Some(tokens) => {
                let header = request
                    .metadata()
                    .get("authorization")
                    .ok_or_else(|| Status::unauthenticated("this front needs `authorization: Bearer <token>`"))?;
                let presented = header
                    .as_bytes()
                    .strip_prefix(b"Bearer ")
                    .ok_or_else(|| Status::unauthenticated("authorization: expected `Bearer <token>`"))?;
                tokens
                    .tenant(presented)
                    .ok_or_else(|| Status::unauthenticated("authorization: unknown token"))?
            }
        };
        request.extensions_mut().insert(tenant);
        Ok(request)
    }
}

/// The client side: adds `authorization: Bearer <token>` to every call when it has a token. The
/// value is marked sensitive, so it never appears in debug output.
#[derive(Clone, Debug, Default)]
pub struct Bearer(Option<tonic::metadata::MetadataValue<tonic::metadata::Ascii>>);

impl Bearer {
    /// A bearer for `token` (none: calls go without one).
    ///
    /// # Errors
    /// A token holding characters a header cannot carry.
    pub fn new(token: Option<&str>) -> Result<Bearer, FrontError> {
        let Some(t) = token else { return Ok(Bearer(None)) };
        let mut v: tonic::metadata::MetadataValue<tonic::metadata::Ascii> = format!("Bearer {t}")
            .parse()
            .map_err(|_| FrontError::invalid("token", "holds characters a header cannot carry"))?;
        v.set_sensitive(true);
        Ok(Bearer(Some(v)))
    }
}

impl tonic::service::Interceptor for Bearer {
    fn call(&mut self, mut request: Request<()>) -> Result<Request<()>, Status> {
        if let Some(v) = &self.0 {
            request.metadata_mut().insert("authorization", v.clone());
        }
        Ok(request)
    }
}

/// A short, non-secret reference to a batch for logs: its first 8 hex digits (the full id is a
/// capability and stays out of logs).
pub fn batch_ref(batch_id: &str) -> &str {
    batch_id.get(..8).unwrap_or(batch_id)
}

#[cfg(test)]
mod tests {
    use super::*;
    use tonic::service::Interceptor;

    const FILE: &str = "# tenants of the pilot plant\nroute-dev  rd-0123456789abcdef\nqa qa-fedcba9876543210 # night shift\n\n";

    #[test]
    fn tokens_name_their_tenant_and_nothing_else_passes() {
        let t = Tokens::parse(FILE, "tokens").unwrap();
        assert_eq!(t.len(), 2);
        assert_eq!(t.tenant(b"rd-0123456789abcdef").unwrap().as_str(), "route-dev");
        assert_eq!(t.tenant(b"qa-fedcba9876543210").unwrap().as_str(), "qa");
        assert!(t.tenant(b"rd-0123456789abcde").is_none());
        assert!(t.tenant(b"").is_none());
        assert!(!format!("{t:?}").contains("rd-0123"));
    }

    #[test]
    fn malformed_files_name_the_line_but_never_the_token() {
        for (text, want) in [
            ("a short-token\n", "line 1: token shorter"),
            ("a\n", "line 1: expected `tenant token`"),
            ("\nb/c 0123456789abcdef0\n", "line 2: a tenant name"),
            ("a 0123456789abcdef0\nb 0123456789abcdef0\n", "line 2: this token is already"),
            ("# nothing\n", "no `tenant token` line"),
        ] {
            let e = Tokens::parse(text, "tokens").unwrap_err().to_string();
            assert!(e.contains(want), "{e}");
            assert!(!e.contains("0123456789abcdef0") && !e.contains("short-token"), "{e}");
        }
    }

    #[test]
    fn the_interceptor_tags_the_tenant_or_refuses() {
        let mut auth = Authenticator::new(Some(Tokens::parse(FILE, "tokens").unwrap()));
        let mut ok = Request::new(());
        ok.metadata_mut()
            .insert("authorization", "Bearer qa-fedcba9876543210".parse().unwrap());
        let r = auth.call(ok).unwrap();
        assert_eq!(tenant_of(&r).as_str(), "qa");
        for header in [None, Some("qa-fedcba9876543210"), Some("Bearer nope-nope-nope-nope")] {
            let mut req = Request::new(());
            if let Some(h) = header {
                req.metadata_mut().insert("authorization", h.parse().unwrap());
            }
            assert_eq!(auth.call(req).unwrap_err().code(), tonic::Code::Unauthenticated);
        }
        let mut open = Authenticator::new(None);
        assert_eq!(tenant_of(&open.call(Request::new(())).unwrap()).as_str(), "");
    }
}
