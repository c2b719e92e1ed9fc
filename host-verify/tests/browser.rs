//! The HTML report in a real headless browser (Debian's `chromium`): the
//! page loads without a console message, every plot is present, decodes
//! and is not blank, and a screenshot is saved into the report folder.
//!
//! Ignored by `cargo test` (it needs a browser and a report written by a
//! release build); `.ci/run` installs `chromium`, writes the report and
//! runs it with
//! `cargo test -p fixsight-verify --test browser -- --ignored`.
//! `FIXSIGHT_REPORT_DIR` names the report folder (default
//! `fixsight-report` at the top of the repository), `CHROMIUM` the browser
//! (default `/usr/bin/chromium`).

use base64::Engine as _;
use std::path::{Path, PathBuf};
use std::process::Command;

fn report_dir() -> PathBuf {
    std::env::var_os("FIXSIGHT_REPORT_DIR")
        .map(PathBuf::from)
        .unwrap_or_else(|| Path::new(env!("CARGO_MANIFEST_DIR")).join("../fixsight-report"))
}

/// The browser flags a closed network needs: no background connections,
/// a fresh profile, no sandbox (CI runs as root).
fn chromium(profile: &Path) -> Command {
    let exe = std::env::var("CHROMIUM").unwrap_or_else(|_| "/usr/bin/chromium".into());
    let mut c = Command::new(exe);
    c.args([
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--enable-logging=stderr",
        "--v=0",
        "--virtual-time-budget=10000",
    ])
    .arg(format!("--user-data-dir={}", profile.display()));
    c
}

/// The PNG plots of the page (`data:` URIs of `<img>` tags).
fn plots(html: &str) -> Vec<Vec<u8>> {
    html.split("src=\"data:image/png;base64,")
        .skip(1)
        .map(|rest| {
            let b64 = &rest[..rest.find('"').expect("closing quote")];
            base64::engine::general_purpose::STANDARD
                .decode(b64)
                .expect("valid base64")
        })
        .collect()
}

#[test]
#[ignore = "needs chromium and a report written by `fixsight-verify report`; run by .ci/run"]
fn report_html_opens_in_headless_chromium() {
    let dir = report_dir();
    let page = dir.join("report.html");
    let html = std::fs::read_to_string(&page).unwrap_or_else(|e| {
        panic!(
            "{}: {e} (run `fixsight-verify report` first)",
            page.display()
        )
    });
    assert!(
        !html.contains("http://") && !html.contains("https://"),
        "the page must not reach the network"
    );

    // Every plot decodes and is not a blank canvas.
    let pngs = plots(&html);
    assert!(pngs.len() >= 20, "only {} plots in the page", pngs.len());
    for (i, p) in pngs.iter().enumerate() {
        let img = image::load_from_memory(p)
            .unwrap_or_else(|e| panic!("plot {i}: {e}"))
            .to_rgb8();
        assert!(img.width() > 0 && img.height() > 0, "plot {i} is empty");
        let first = img.get_pixel(0, 0);
        assert!(img.pixels().any(|px| px != first), "plot {i} is one colour");
    }

    // In the browser: a copy of the page with a check that every image
    // loaded; the result lands in an attribute of <body> in the dumped DOM,
    // a missing image in the console.
    let work = std::env::temp_dir().join(format!("fixsight-browser-{}", std::process::id()));
    std::fs::create_dir_all(&work).unwrap();
    let check = work.join("report-check.html");
    let probe = "<script>window.addEventListener('load',function(){var m=document.images,ok=0;\
                 for(var i=0;i<m.length;i++){if(m[i].complete&&m[i].naturalWidth>0){ok++;}\
                 else{console.error('plot '+i+' did not load');}}\
                 document.body.setAttribute('data-plots-loaded',ok+'/'+m.length);});</script>";
    std::fs::write(&check, html.replace("</body>", &format!("{probe}</body>"))).unwrap();
    let out = chromium(&work.join("profile"))
        .arg("--dump-dom")
        .arg(format!("file://{}", check.display()))
        .output()
        .expect("chromium runs (apt-get install -y --no-install-recommends chromium)");
    let dom = String::from_utf8_lossy(&out.stdout);
    let log = String::from_utf8_lossy(&out.stderr);
    assert!(out.status.success(), "chromium failed: {log}");
    let want = format!("data-plots-loaded=\"{0}/{0}\"", pngs.len());
    assert!(
        dom.contains(&want),
        "expected {want} in the page; console: {log}"
    );
    let console: Vec<&str> = log.lines().filter(|l| l.contains("CONSOLE")).collect();
    assert!(console.is_empty(), "console messages: {console:#?}");

    // A screenshot of the page into the report folder.
    let shot = dir.join("report-screenshot.png");
    let out = chromium(&work.join("profile2"))
        .arg("--window-size=1400,2400")
        .arg(format!("--screenshot={}", shot.display()))
        .arg(format!("file://{}", page.canonicalize().unwrap().display()))
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let img = image::open(&shot).expect("screenshot is a PNG").to_rgb8();
    let first = img.get_pixel(0, 0);
    assert!(img.pixels().any(|p| p != first), "the screenshot is blank");
    let _ = std::fs::remove_dir_all(&work);
}
