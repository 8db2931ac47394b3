//! Balancing calls over every replica behind one name.
//!
//! gRPC keeps its connection open, so a caller that connects to a plain
//! Kubernetes Service (one virtual IP) stays with the replica it first
//! reached, and replicas added later sit idle. With
//! [`crate::ClientBuilder::balance_over_dns`], the client resolves the
//! server's host name to all its addresses (a headless Service returns one
//! per ready pod), opens a connection to each, and sends each call to the
//! less busy of two at random (tonic's balancing channel: tower's
//! power-of-two-choices over the calls each connection has pending). The
//! name is resolved again every refresh period, so replicas that come and go
//! join and leave the set.
//!
//! Callers that do not balance still move, more slowly: the server closes
//! every connection gracefully after its maximum age, and the reconnection
//! may reach another replica.

use std::{
    collections::BTreeSet, future::Future, io, net::SocketAddr, pin::Pin, sync::Arc, time::Duration,
};

use tonic::transport::{channel::Change, Channel, Endpoint, Uri};

use crate::{ClientBuilder, ClientError};

/// How often the name is resolved again, by default.
pub const DEFAULT_DNS_REFRESH: Duration = Duration::from_secs(30);

/// Changes of the address set that may wait for the balancer at once.
const CHANGE_QUEUE: usize = 64;

/// What a resolver returns: every address the name stands for now.
pub type ResolveFuture = Pin<Box<dyn Future<Output = io::Result<Vec<SocketAddr>>> + Send>>;

/// Resolves a host name and port to addresses (DNS by default).
pub type Resolver = Arc<dyn Fn(&str, u16) -> ResolveFuture + Send + Sync>;

/// How a client balances.
#[derive(Clone)]
pub(crate) struct Balancing {
    pub(crate) resolver: Resolver,
    pub(crate) refresh: Duration,
}

impl std::fmt::Debug for Balancing {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Balancing")
            .field("refresh", &self.refresh)
            .finish_non_exhaustive()
    }
}

/// The system resolver (`getaddrinfo`, through tokio).
pub(crate) fn dns_resolver() -> Resolver {
    Arc::new(|host: &str, port: u16| {
        let host = host.to_owned();
        Box::pin(async move {
            tokio::net::lookup_host((host.as_str(), port))
                .await
                .map(Iterator::collect)
        })
    })
}

/// The name and port a balanced client resolves, from its endpoint URI.
struct Target {
    uri: Uri,
    scheme: String,
    host: String,
    port: u16,
}

impl Target {
    fn parse(endpoint: &str) -> Result<Self, String> {
        let uri: Uri = endpoint.parse().map_err(|e| format!("not a URI ({e})"))?;
        let scheme = uri.scheme_str().unwrap_or("http").to_owned();
        let host = uri
            .host()
            .ok_or_else(|| "no host name to resolve".to_owned())?
            .trim_start_matches('[')
            .trim_end_matches(']')
            .to_owned();
        let port = uri
            .port_u16()
            .unwrap_or(if scheme == "https" { 443 } else { 80 });
        Ok(Self {
            uri,
            scheme,
            host,
            port,
        })
    }

    /// The endpoint URI of one resolved address.
    fn address_uri(&self, address: SocketAddr) -> String {
        format!("{}://{address}", self.scheme)
    }
}

/// A channel balancing over every address `builder`'s host resolves to,
/// resolved once before it returns (an error if nothing resolves), then kept
/// up to date by a background task that ends with the channel.
pub(crate) async fn balanced_channel(
    builder: &ClientBuilder,
    balancing: &Balancing,
) -> Result<Channel, ClientError> {
    let target = Target::parse(&builder.endpoint).map_err(|r| invalid(builder, r))?;
    let found = (balancing.resolver)(&target.host, target.port)
        .await
        .map_err(|e| invalid(builder, format!("{} does not resolve ({e})", target.host)))?;
    if found.is_empty() {
        return Err(invalid(
            builder,
            format!("{} resolves to no address", target.host),
        ));
    }
    let (channel, changes) = Channel::balance_channel::<SocketAddr>(CHANGE_QUEUE);
    let mut current = BTreeSet::new();
    for address in found {
        if current.insert(address) {
            let endpoint = address_endpoint(builder, &target, address)?;
            let _ = changes.send(Change::Insert(address, endpoint)).await;
        }
    }
    tokio::spawn(keep_resolving(
        builder.clone(),
        balancing.clone(),
        target,
        changes,
        current,
        false,
    ));
    Ok(channel)
}

/// Like [`balanced_channel`], resolving in the background only: calls made
/// before the first addresses arrive wait for them.
pub(crate) fn balanced_channel_lazy(
    builder: &ClientBuilder,
    balancing: &Balancing,
) -> Result<Channel, ClientError> {
    let target = Target::parse(&builder.endpoint).map_err(|r| invalid(builder, r))?;
    let (channel, changes) = Channel::balance_channel::<SocketAddr>(CHANGE_QUEUE);
    tokio::spawn(keep_resolving(
        builder.clone(),
        balancing.clone(),
        target,
        changes,
        BTreeSet::new(),
        true,
    ));
    Ok(channel)
}

fn invalid(builder: &ClientBuilder, reason: String) -> ClientError {
    ClientError::InvalidEndpoint {
        endpoint: builder.endpoint.clone(),
        reason,
    }
}

/// The endpoint of one resolved address: its connection goes to that
/// address, but its requests (and the TLS name check) still name the host.
fn address_endpoint(
    builder: &ClientBuilder,
    target: &Target,
    address: SocketAddr,
) -> Result<Endpoint, ClientError> {
    Ok(builder
        .endpoint_at(&target.address_uri(address), Some(&target.host))?
        .origin(target.uri.clone()))
}

/// Resolve the name every refresh period (at once first, if `now`) and
/// tell the balancer which addresses came and went, until the channel is
/// dropped. A failed or empty resolution keeps the addresses already known.
async fn keep_resolving(
    builder: ClientBuilder,
    balancing: Balancing,
    target: Target,
    changes: tokio::sync::mpsc::Sender<Change<SocketAddr, Endpoint>>,
    mut current: BTreeSet<SocketAddr>,
    now: bool,
) {
    let mut wait = !now;
    loop {
        if wait {
            tokio::time::sleep(balancing.refresh).await;
        }
        wait = true;
        if changes.is_closed() {
            return;
        }
        let found = match (balancing.resolver)(&target.host, target.port).await {
            Ok(found) if !found.is_empty() => found.into_iter().collect::<BTreeSet<_>>(),
            _ => continue,
        };
        for gone in current.difference(&found) {
            if changes.send(Change::Remove(*gone)).await.is_err() {
                return;
            }
        }
        for new in found.difference(&current) {
            let Ok(endpoint) = address_endpoint(&builder, &target, *new) else {
                return;
            };
            if changes.send(Change::Insert(*new, endpoint)).await.is_err() {
                return;
            }
        }
        current = found;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_name_and_port_come_from_the_endpoint() {
        let target = Target::parse("http://oxbind-headless.clinical.svc:50051").unwrap();
        assert_eq!(target.host, "oxbind-headless.clinical.svc");
        assert_eq!(target.port, 50051);
        let address: SocketAddr = "10.1.2.3:50051".parse().unwrap();
        assert_eq!(target.address_uri(address), "http://10.1.2.3:50051");
        let tls = Target::parse("https://oxbind.example.invalid").unwrap();
        assert_eq!(tls.port, 443);
        assert!(Target::parse("not a uri").is_err());
    }
}
