//! `cargo xtask dist`: builds the page as one self-contained HTML file,
//! `dist/plateau.html` (plus `dist/index.html`, the same bytes).
//!
//! Steps: the `plateau-web` crate for wasm32 in release mode, `wasm-bindgen
//! --target web`, `wasm-opt -O3` (speed over size: the wasm is far under its 1.5 MB budget) when binaryen's npm build is installed, then
//! `web/index.html` is filled in: `static/style.css` inline, the glue script,
//! the wasm bytes as base64, the worker's source (the glue again and
//! `web/worker.js`, as a string the page turns into a Blob URL) and
//! `web/app.js` in one inline module script, and a Content-Security-Policy
//! whose script and style sources are the sha256 hashes of exactly those
//! inline blocks. With `connect-src 'none'` the page could not fetch its own
//! `.wasm`, which is why the bytes are inlined and compiled in the page (the
//! compiled module is posted to the worker).

use crate::tools::{self, run};
use anyhow::{bail, Context, Result};
use base64::Engine;
use sha2::{Digest, Sha256};
use std::path::{Path, PathBuf};
use std::process::Command;

pub fn run_task(args: &[String]) -> Result<()> {
    crate::no_args("dist", args)?;
    let page = build(&crate::workspace_root())?;
    println!("xtask: wrote {}", page.display());
    Ok(())
}

/// Sizes of one build, for the docs.
pub struct Sizes {
    pub wasm_raw: usize,
    pub wasm_gzip: usize,
    pub html: usize,
}

/// Builds the single-file page and returns its path.
pub fn build(root: &Path) -> Result<PathBuf> {
    tools::wasm_target()?;
    let bindgen = tools::wasm_bindgen(root)?;
    run(tools::cargo().current_dir(root).args([
        "build",
        "--release",
        "--target",
        "wasm32-unknown-unknown",
        "-p",
        "plateau-web",
    ]))?;
    let out = root.join("target/web");
    std::fs::create_dir_all(&out)?;
    run(Command::new(bindgen)
        .arg("--target")
        .arg("web")
        .arg("--no-typescript")
        .arg("--out-dir")
        .arg(&out)
        .arg(root.join("target/wasm32-unknown-unknown/release/plateau_web.wasm")))?;
    let wasm_path = out.join("plateau_web_bg.wasm");
    match tools::wasm_opt(root) {
        Some(opt) => {
            let optimised = out.join("plateau_web_opt.wasm");
            run(Command::new(opt)
                .arg("-O3")
                .arg("--enable-bulk-memory")
                .arg("--enable-nontrapping-float-to-int")
                .arg("--enable-sign-ext")
                .arg("--enable-mutable-globals")
                .arg("--enable-reference-types")
                .arg("--enable-multivalue")
                .arg(&wasm_path)
                .arg("-o")
                .arg(&optimised))?;
            std::fs::rename(&optimised, &wasm_path)?;
        }
        None => println!("xtask: wasm-opt not installed (tests/browser npm packages); skipping"),
    }
    let wasm = std::fs::read(&wasm_path).context("reading the wasm-bindgen output")?;
    let glue = std::fs::read_to_string(out.join("plateau_web.js"))?;
    let html = assemble(root, &glue, &wasm)?;
    let dist = root.join("dist");
    std::fs::create_dir_all(&dist)?;
    let page = dist.join("plateau.html");
    std::fs::write(&page, &html)?;
    std::fs::write(dist.join("index.html"), &html)?;
    let sizes = Sizes {
        wasm_raw: wasm.len(),
        wasm_gzip: gzip_len(&wasm),
        html: html.len(),
    };
    println!(
        "xtask: wasm {} bytes raw, {} gzip; page {} bytes",
        sizes.wasm_raw, sizes.wasm_gzip, sizes.html
    );
    std::fs::write(
        dist.join("sizes.json"),
        format!(
            "{{\"wasm_raw\":{},\"wasm_gzip\":{},\"html\":{}}}\n",
            sizes.wasm_raw, sizes.wasm_gzip, sizes.html
        ),
    )?;
    Ok(page)
}

fn gzip_len(bytes: &[u8]) -> usize {
    use flate2::write::GzEncoder;
    use std::io::Write;
    let mut enc = GzEncoder::new(Vec::new(), flate2::Compression::best());
    // Writing to a Vec cannot fail.
    let _ = enc.write_all(bytes);
    enc.finish().map(|v| v.len()).unwrap_or(0)
}

fn csp_hash(text: &str) -> String {
    let digest = Sha256::digest(text.as_bytes());
    format!(
        "'sha256-{}'",
        base64::engine::general_purpose::STANDARD.encode(digest)
    )
}

/// The glue as a classic script, for the worker: a page opened from
/// `file://` has an opaque origin, and Chromium starts no module worker
/// from such a page's Blob URLs. `export` goes; `import.meta.url` is only
/// read by the glue's fetching init, which the worker never calls.
fn classic(glue: &str) -> Result<String> {
    let mut out = String::with_capacity(glue.len());
    for line in glue.lines() {
        if line.starts_with("export {") {
            continue;
        }
        out.push_str(line.strip_prefix("export ").unwrap_or(line));
        out.push('\n');
    }
    if !out.contains("import.meta.url") {
        bail!("the wasm-bindgen glue changed shape: no import.meta.url to replace");
    }
    let out = out.replace("import.meta.url", "self.location.href");
    if out.contains("export ") || out.contains("import.meta") || out.contains("\nimport ") {
        bail!("the wasm-bindgen glue changed shape: it still has module syntax");
    }
    Ok(out)
}

/// Fills the `{{…}}` slots of `web/index.html`.
///
/// `worker-src blob:` lets the page start its worker from the Blob URL it
/// makes of `WORKER_SOURCE`; the worker inherits this policy, so it cannot
/// connect anywhere either. Charts are drawn on an OffscreenCanvas in the
/// worker with text measured there, so no style attribute is needed.
fn assemble(root: &Path, glue: &str, wasm: &[u8]) -> Result<String> {
    let template = std::fs::read_to_string(root.join("web/index.html"))?;
    let style = std::fs::read_to_string(root.join("static/style.css"))?;
    let icon = std::fs::read(root.join("static/icon.svg"))?;
    let app = std::fs::read_to_string(root.join("web/app.js"))?;
    let worker = std::fs::read_to_string(root.join("web/worker.js"))?;
    let worker_source = serde_json::to_string(&format!("{}\n{worker}\n", classic(glue)?))?;
    let b64 = base64::engine::general_purpose::STANDARD;
    // The glue ends with `export { initSync }; export default __wbg_init;`:
    // exports are legal in an inline module script, so it is kept verbatim.
    let script = format!(
        "\n{glue}\nconst WASM_BASE64 = \"{}\";\nconst WORKER_SOURCE = {worker_source};\n{app}\n",
        b64.encode(wasm)
    );
    if script.contains("</script") {
        bail!("the inline script contains </script and would end early");
    }
    let csp = format!(
        "default-src 'none'; script-src {} 'wasm-unsafe-eval'; style-src-elem {}; img-src data: blob:; \
         connect-src 'none'; font-src 'none'; object-src 'none'; media-src 'none'; \
         frame-src 'none'; worker-src blob:; manifest-src 'none'; base-uri 'none'; form-action 'none'",
        csp_hash(&script),
        csp_hash(&style)
    );
    let mut html = template;
    for (slot, value) in [
        ("{{CSP}}", csp.as_str()),
        ("{{ICON}}", &b64.encode(icon)),
        ("{{STYLE}}", style.as_str()),
        ("{{SCRIPT}}", script.as_str()),
    ] {
        if !html.contains(slot) {
            bail!("web/index.html has no {slot} slot");
        }
        html = html.replacen(slot, value, 1);
    }
    Ok(html)
}
