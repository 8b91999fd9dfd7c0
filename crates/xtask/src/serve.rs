//! `cargo xtask serve [--port N]`: builds the single-file page (see
//! [`crate::dist`]) and serves `dist/` on 127.0.0.1, so the README's first
//! command shows the page with its demo data. The server is a few lines of
//! std: it answers GET for files directly under `dist/` and nothing else,
//! and binds to loopback only.

use anyhow::{bail, Context, Result};
use std::io::{BufRead, BufReader, Write};
use std::net::{TcpListener, TcpStream};
use std::path::Path;

pub fn run_task(args: &[String]) -> Result<()> {
    let port = match args {
        [] => 8080,
        [flag, n] if flag == "--port" => n.parse().context("--port: expected a number")?,
        _ => bail!("usage: cargo xtask serve [--port N]"),
    };
    let root = crate::workspace_root();
    crate::dist::build(&root)?;
    let listener = TcpListener::bind(("127.0.0.1", port))
        .with_context(|| format!("cannot listen on 127.0.0.1:{port}"))?;
    println!("xtask: Plateau is at http://127.0.0.1:{port}/  (Ctrl-C stops)");
    let dist = root.join("dist");
    for stream in listener.incoming().flatten() {
        if let Err(e) = answer(stream, &dist) {
            eprintln!("xtask serve: {e:#}");
        }
    }
    Ok(())
}

fn answer(mut stream: TcpStream, dist: &Path) -> Result<()> {
    let mut request = String::new();
    BufReader::new(&stream).read_line(&mut request)?;
    let mut parts = request.split_whitespace();
    let (method, path) = (parts.next().unwrap_or(""), parts.next().unwrap_or("/"));
    let name = path
        .split('?')
        .next()
        .unwrap_or("/")
        .trim_start_matches('/');
    let name = if name.is_empty() { "index.html" } else { name };
    let file = (method == "GET" && !name.contains('/') && !name.contains(".."))
        .then(|| std::fs::read(dist.join(name)).ok())
        .flatten();
    match file {
        Some(body) => {
            let kind = match Path::new(name).extension().and_then(|e| e.to_str()) {
                Some("html") => "text/html; charset=utf-8",
                Some("json") => "application/json",
                _ => "application/octet-stream",
            };
            write!(
                stream,
                "HTTP/1.1 200 OK\r\nContent-Type: {kind}\r\nContent-Length: {}\r\nCache-Control: no-store\r\nConnection: close\r\n\r\n",
                body.len()
            )?;
            stream.write_all(&body)?;
        }
        None => {
            write!(
                stream,
                "HTTP/1.1 404 Not Found\r\nContent-Length: 0\r\nConnection: close\r\n\r\n"
            )?;
        }
    }
    Ok(())
}
