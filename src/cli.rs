/*!
The command line: `serve`, `demo`, `import`, `report`, `backup`. Each command opens the database
(migrating it), does its work through the same library code the server uses, and exits.

`serve`, `demo` and `import` write: each owns the database file for as long as it runs (its lock,
see `store`), and stops at once, naming the file and the pid that holds it, while another process
owns it. `backup` and `report` only read, and run also beside a running server ([`App::open_shared`]).
*/

use std::io::Write;
use std::net::SocketAddr;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::atomic::Ordering;
use std::sync::Arc;

use clap::{Parser, Subcommand};

use crate::app::{self, App};
use crate::store;
use crate::web::{self, AppState};

#[derive(Parser)]
#[command(name = "airledger", version, about = "Local dashboard for compressed-air system audits")]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

/// The default upload limit, in MB: a year of 1 s readings on four channels is about 1.6 GB of CSV.
const DEFAULT_MAX_UPLOAD_MB: u64 = 2048;

#[derive(Subcommand)]
enum Command {
    /// Serve the dashboard for one database file.
    Serve {
        /// The SQLite database file (created if missing).
        #[arg(long, default_value = "airledger.sqlite")]
        db: PathBuf,
        /// Address to listen on.
        #[arg(long, default_value = "127.0.0.1:8080")]
        bind: SocketAddr,
        /// Largest logger file accepted, in MB (bigger uploads get 413). The default takes a year
        /// of 1 s readings on four channels (about 1.6 GB of CSV).
        #[arg(long, default_value_t = DEFAULT_MAX_UPLOAD_MB)]
        max_upload_mb: u64,
        /// Access token; required when binding to anything but loopback.
        #[arg(long, env = "AIRLEDGER_TOKEN", hide_env_values = true)]
        token: Option<String>,
        /// A further host name the server answers to (repeatable): requests naming any other host are
        /// refused, a guard against DNS rebinding.
        #[arg(long = "allow-host")]
        allow_host: Vec<String>,
    },
    /// Build the demo plant's database if it is missing, then serve it.
    Demo {
        #[arg(long, default_value = "airledger-demo.sqlite")]
        db: PathBuf,
        #[arg(long, default_value = "127.0.0.1:8080")]
        bind: SocketAddr,
        /// Access token; required when binding to anything but loopback.
        #[arg(long, env = "AIRLEDGER_TOKEN", hide_env_values = true)]
        token: Option<String>,
        /// A further host name the server answers to (repeatable): requests naming any other host are
        /// refused, a guard against DNS rebinding.
        #[arg(long = "allow-host")]
        allow_host: Vec<String>,
        /// Build the database and exit without serving.
        #[arg(long)]
        build_only: bool,
    },
    /// Import logger files into an audit, through the same path as an upload.
    Import {
        #[arg(long)]
        db: PathBuf,
        #[arg(long)]
        audit: i64,
        /// The column mapping (JSON, as the API's `mapping` part).
        #[arg(long)]
        mapping: PathBuf,
        /// Replace stored readings of the same channels in each file's span.
        #[arg(long)]
        replace: bool,
        #[arg(required = true)]
        files: Vec<PathBuf>,
    },
    /// Print an audit's summary (json) or write its findings page (html).
    Report {
        #[arg(long)]
        db: PathBuf,
        #[arg(long)]
        audit: i64,
        #[arg(long, default_value = "json")]
        format: String,
        /// Write to this file instead of standard output.
        #[arg(long)]
        out: Option<PathBuf>,
    },
    /// Write a consistent copy of the database, also while the server runs.
    Backup {
        #[arg(long)]
        db: PathBuf,
        #[arg(long)]
        out: PathBuf,
    },
}

pub fn main() -> ExitCode {
    let cli = Cli::parse();
    tracing_subscriber::fmt()
        .with_env_filter(
            tracing_subscriber::EnvFilter::try_from_default_env()
                .unwrap_or_else(|_| tracing_subscriber::EnvFilter::new("airledger=info,warn")),
        )
        .with_writer(std::io::stderr)
        .init();
    let rt = match tokio::runtime::Builder::new_multi_thread().enable_all().build() {
        Ok(rt) => rt,
        Err(e) => {
            eprintln!("error: cannot start the runtime: {e}");
            return ExitCode::FAILURE;
        }
    };
    match rt.block_on(run(cli.command)) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {e:#}");
            ExitCode::FAILURE
        }
    }
}

/// Loopback needs no token; any other address does (it is reachable from the plant network).
fn check_access(bind: &SocketAddr, token: &Option<String>) -> anyhow::Result<()> {
    if !bind.ip().is_loopback() && token.as_deref().is_none_or(|t| t.trim().is_empty()) {
        anyhow::bail!(
            "binding to {bind} makes the dashboard reachable from other machines: give an access token \
             with --token or AIRLEDGER_TOKEN (or bind to 127.0.0.1)"
        );
    }
    Ok(())
}

/// The application owning the database file, its spool folder beside it; refused while another
/// process owns the file.
async fn open(db: &Path) -> anyhow::Result<App> {
    App::open(db, app::Config::beside(db)).await.map_err(store_error)
}

/// The application over the database file to read it, also beside a running server.
async fn open_shared(db: &Path) -> anyhow::Result<App> {
    App::open_shared(db, app::Config::beside(db)).await.map_err(store_error)
}

/// A storage error said as it is (the file in use, the file damaged), not as an internal fault.
fn store_error(e: app::Error) -> anyhow::Error {
    match e {
        app::Error::Internal(e) if e.is::<store::StoreError>() => e,
        e => e.into(),
    }
}

fn web_config(max_upload_mb: u64, token: Option<String>, allow_hosts: Vec<String>) -> web::Config {
    web::Config { max_upload_bytes: max_upload_mb * 1024 * 1024, token, bound: None, allow_hosts }
}

async fn run(command: Command) -> anyhow::Result<()> {
    match command {
        Command::Serve { db, bind, max_upload_mb, token, allow_host } => {
            check_access(&bind, &token)?;
            let app = open(&db).await?;
            web::run_server(AppState::new(app, web_config(max_upload_mb, token, allow_host)), bind).await
        }
        Command::Demo { db, bind, token, allow_host, build_only } => {
            if !build_only {
                check_access(&bind, &token)?;
            }
            let app = open(&db).await?;
            let id = app.ensure_demo().await?;
            println!("demo plant: audit {id} in {}", db.display());
            if build_only {
                return Ok(());
            }
            println!("report: http://{bind}/audits/{id}/report");
            web::run_server(AppState::new(app, web_config(DEFAULT_MAX_UPLOAD_MB, token, allow_host)), bind)
                .await
        }
        Command::Import { db, audit, mapping, replace, files } => {
            let app = open(&db).await?;
            let text = std::fs::read_to_string(&mapping)?;
            let mapping: crate::ingest::Mapping = serde_json::from_str(&text)
                .map_err(|e| anyhow::anyhow!("the mapping {} is not valid: {e}", mapping.display()))?;
            for f in files {
                let progress = Arc::new(store::import::Progress::default());
                let p = progress.clone();
                let name = f.display().to_string();
                let ticker = tokio::spawn(async move {
                    loop {
                        tokio::time::sleep(std::time::Duration::from_millis(250)).await;
                        let done = p.bytes_done.load(Ordering::Relaxed);
                        let total = p.bytes_total.load(Ordering::Relaxed).max(1);
                        let pct = (done as f64 / total as f64 * 100.0).min(100.0);
                        let bar = "#".repeat((pct / 5.0) as usize);
                        eprint!("\r{name}: [{bar:<20}] {pct:5.1} %");
                        let _ = std::io::stderr().flush();
                    }
                });
                let outcome = app.import_path(audit, &f, mapping.clone(), replace, progress).await;
                ticker.abort();
                eprintln!();
                match outcome? {
                    store::import::ImportOutcome::Created(s) => {
                        println!(
                            "{}: upload {} with {} rows, {} readings, {} to {}",
                            f.display(),
                            s.upload_id,
                            s.rows,
                            s.readings,
                            s.first.as_deref().unwrap_or("-"),
                            s.last.as_deref().unwrap_or("-")
                        );
                        for w in &s.warnings {
                            println!("  warning: {w}");
                        }
                    }
                    store::import::ImportOutcome::Duplicate { upload_id } => {
                        println!("{}: already imported as upload {upload_id}; nothing added", f.display());
                    }
                }
            }
            // The summary now, so that the server's first report reads it from the cache.
            app.summary(audit, None).await?;
            Ok(())
        }
        Command::Report { db, audit, format, out } => {
            let app = open_shared(&db).await?;
            let text = match format.as_str() {
                "json" => serde_json::to_string_pretty(&app.summary(audit, None).await?.to_json()?)?,
                "html" => crate::web::pages::findings::findings_html(&app, audit).await?,
                other => anyhow::bail!("unknown format {other:?}: use json or html"),
            };
            match out {
                Some(p) => std::fs::write(&p, text)?,
                None => println!("{text}"),
            }
            Ok(())
        }
        Command::Backup { db, out } => {
            let app = open_shared(&db).await?;
            if out.exists() {
                anyhow::bail!("{} exists already; choose a new file", out.display());
            }
            app.backup(&out).await?;
            println!("backup written to {}", out.display());
            Ok(())
        }
    }
}
