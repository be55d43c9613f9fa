//! `ohmsheet lsp` in a real editor: Debian's Neovim, headless, runs
//! tests/nvim/lsp_session.lua on a copy of a demo sheet and writes what
//! the server told it as JSON; this test asserts on that. Neovim is an
//! outside program (tests/common/outside.rs): under CI=true a missing
//! `nvim` fails the test, elsewhere the skip is counted and shown.
//!
//! Expected values: the demo sheet's own reference figures, computed
//! independently with Python's cmath (sheets-demo/verify/motor_bus.py):
//! Zth = 0.0063825 + j0.0138671 Ω and Ifault = 18.318 kA.

use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use serde_json::Value;

use crate::common::outside;

const DEMO: &str = "sheets-demo/motor-bus-thevenin.ohm";

/// Headless Neovim with a throw-away home in `home` (no user config,
/// history or swap files), its standard streams shut (a pipe nobody reads
/// could fill and stall it).
fn nvim_in(nvim: &std::path::Path, home: &std::path::Path) -> Command {
    let mut c = Command::new(nvim);
    c.env("HOME", home)
        .env("XDG_CONFIG_HOME", home)
        .env("XDG_DATA_HOME", home)
        .env("XDG_STATE_HOME", home)
        .current_dir(home)
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .stderr(Stdio::null());
    c
}

/// Wait for `child` to end, killing it and failing the test after `secs`.
fn wait_for(mut child: std::process::Child, secs: u64) -> std::process::ExitStatus {
    let deadline = Instant::now() + Duration::from_secs(secs);
    loop {
        if let Some(s) = child.try_wait().unwrap() {
            return s;
        }
        if Instant::now() > deadline {
            let _ = child.kill();
            panic!("nvim did not finish within {secs} s");
        }
        std::thread::sleep(Duration::from_millis(50));
    }
}

/// The numbers in a text (`6.383 + j13.87 mΩ` → 6.383, 13.87).
fn numbers(s: &str) -> Vec<f64> {
    let mut v = Vec::new();
    let mut cur = String::new();
    for c in s.chars().chain(std::iter::once(' ')) {
        if c.is_ascii_digit() || c == '.' || (c == '-' && cur.is_empty()) {
            cur.push(c);
        } else {
            if let Ok(x) = cur.parse::<f64>() {
                v.push(x);
            }
            cur.clear();
        }
    }
    v
}

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * b.abs()
}

fn label(h: &Value) -> String {
    match &h["label"] {
        Value::String(s) => s.trim().to_string(),
        Value::Array(p) => p
            .iter()
            .filter_map(|x| x["value"].as_str())
            .collect::<String>()
            .trim()
            .to_string(),
        _ => String::new(),
    }
}

#[test]
fn neovim_shows_diagnostics_values_completion_hover_and_definition() {
    let Some(nvim) = outside::need(
        "lsp_nvim::neovim_shows_diagnostics_values_completion_hover_and_definition",
        "Neovim",
        &["nvim"],
        "OHMSHEET_NVIM",
        "apt-get install neovim",
    ) else {
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let sheet = dir.path().join("mcc4.ohm");
    std::fs::copy(DEMO, &sheet).unwrap();
    let out = dir.path().join("got.json");
    let script = std::fs::canonicalize("tests/nvim/lsp_session.lua").unwrap();
    let child = nvim_in(nvim.as_ref(), dir.path())
        .args(["--headless", "-u", "NONE", "-i", "NONE", "-n", "-c"])
        .arg(format!("luafile {}", script.display()))
        .env("OHMSHEET_NVIM_SHEET", &sheet)
        .env("OHMSHEET_NVIM_OUT", &out)
        .env("OHMSHEET_BIN", assert_cmd::cargo::cargo_bin("ohmsheet"))
        .spawn()
        .expect("nvim starts");
    let status = wait_for(child, 240);
    let text = std::fs::read_to_string(&out).unwrap_or_default();
    let got: Value = serde_json::from_str(&text).unwrap_or(Value::Null);
    assert!(
        status.success() && got["failure"].is_null(),
        "nvim: {status}; the script: {}; what it received: {text}",
        got["failure"]
    );
    assert_eq!(got["steps"].as_array().map(Vec::len), Some(9), "{text}");

    // The demo is sound: no diagnostics on open.
    assert_eq!(got["diagnostics"]["on_open"], Value::Array(vec![]), "{text}");
    // `Zcc` for `Zc`: the command line's unknown-name error, where it is.
    let mistake = got["diagnostics"]["mistake"].as_array().expect("diagnostics");
    let d = mistake
        .iter()
        .find(|d| d["code"] == "unknown-name")
        .unwrap_or_else(|| panic!("unknown-name in {mistake:?}"));
    assert_eq!(d["range"]["start"]["line"], got["lines"]["zsrc"]);
    assert!(d["message"].as_str().unwrap().contains("`Zcc`"), "{d}");

    // Inlay hints: Zth and Ifault, against the cmath figures.
    let hints = got["inlay_hints"]["result"].as_array().expect("inlay hints");
    let on = |line: &Value| {
        hints
            .iter()
            .find(|h| &h["position"]["line"] == line)
            .map(label)
            .unwrap_or_else(|| panic!("a hint on line {line}: {hints:?}"))
    };
    let zth = on(&got["lines"]["zth"]);
    let n = numbers(&zth);
    assert!(zth.contains("mΩ"), "{zth}");
    assert!(
        n.len() == 2 && close(n[0], 6.3825, 1e-3) && close(n[1], 13.8671, 1e-3),
        "Zth {zth}"
    );
    let ifault = on(&got["lines"]["ifault"]);
    assert!(ifault.contains("kA"), "{ifault}");
    assert!(close(numbers(&ifault)[0], 18.318, 1e-3), "Ifault {ifault}");
    // Four significant digits, as the editor asked.
    assert!(ifault.contains("18.32"), "{ifault}");

    // Completion after `Z`: the cells named Z…, each with its value.
    let items = got["completion"]["result"]["items"].as_array().expect("completion");
    let item = |name: &str| {
        items
            .iter()
            .find(|i| i["label"] == name)
            .unwrap_or_else(|| panic!("{name} offered: {items:?}"))
    };
    for name in ["Zc", "Zcap", "Zsrc", "Zt", "Zth", "Zu"] {
        item(name);
    }
    let detail = item("Zth")["detail"].as_str().unwrap_or("");
    let n = numbers(detail);
    assert!(
        n.len() == 2 && close(n[0], 6.3825, 1e-3) && close(n[1], 13.8671, 1e-3),
        "{detail}"
    );
    // Cells only named with other letters are not offered.
    assert!(items
        .iter()
        .all(|i| i["label"].as_str().unwrap().to_lowercase().starts_with('z')));

    // Signature help: inside `abs(`, its one parameter.
    let sig = &got["signature"]["result"];
    assert!(
        sig["signatures"][0]["label"].as_str().unwrap().starts_with("abs("),
        "{sig}"
    );
    assert_eq!(sig["activeParameter"], 0);

    // Hover on `Zth`: its value, in the same digits.
    let hover = got["hover"]["result"]["contents"].to_string();
    assert!(hover.contains("Zth") && hover.contains("6.382 + j13.87 mΩ"), "{hover}");
    // Definition of `Zth`: its own line.
    let def = &got["definition"]["result"];
    let target = if def.is_array() { &def[0] } else { def };
    let range = if target["range"].is_null() {
        &target["targetSelectionRange"]
    } else {
        &target["range"]
    };
    assert_eq!(range["start"]["line"], got["lines"]["zth"], "{def}");
}

/// The `lua` blocks of docs/editors.md, in order.
fn lua_blocks(doc: &str) -> Vec<String> {
    let mut blocks = Vec::new();
    let mut cur: Option<String> = None;
    for line in doc.lines() {
        match (&mut cur, line.trim_end()) {
            (None, "```lua") => cur = Some(String::new()),
            (Some(b), "```") => {
                blocks.push(std::mem::take(b));
                cur = None;
            }
            (Some(b), l) => {
                b.push_str(l);
                b.push('\n');
            }
            _ => {}
        }
    }
    blocks
}

/// docs/editors.md's Neovim setup for the Debian package (0.7), taken from
/// the page as a newcomer copies it into `init.lua`, with `ohmsheet` found
/// on the PATH: opening a sheet starts the server, whose diagnostics and
/// hover reach the editor.
#[test]
fn the_neovim_setup_in_docs_editors_works_as_written() {
    let Some(nvim) = outside::need(
        "lsp_nvim::the_neovim_setup_in_docs_editors_works_as_written",
        "Neovim",
        &["nvim"],
        "OHMSHEET_NVIM",
        "apt-get install neovim",
    ) else {
        return;
    };
    let doc = std::fs::read_to_string("docs/editors.md").unwrap();
    let blocks = lua_blocks(&doc);
    let setup = blocks
        .iter()
        .find(|b| b.contains("vim.lsp.start_client"))
        .unwrap_or_else(|| panic!("docs/editors.md has a setup with vim.lsp.start_client: {blocks:?}"));
    let dir = tempfile::tempdir().unwrap();
    let config = dir.path().join("init.lua");
    std::fs::write(&config, setup).unwrap();
    // `ohmsheet` on the PATH, as `cargo install` leaves it.
    let bin = dir.path().join("bin");
    std::fs::create_dir(&bin).unwrap();
    std::os::unix::fs::symlink(assert_cmd::cargo::cargo_bin("ohmsheet"), bin.join("ohmsheet")).unwrap();
    let path = format!("{}:{}", bin.display(), std::env::var("PATH").unwrap_or_default());
    // Ohm's law, 12 V / 4 Ω = 3 A, with a misspelt name on line 3.
    let sheet = dir.path().join("bench.ohm");
    std::fs::write(&sheet, "V = 12 V\nR = 4 Ω\nI = V / Rr\n").unwrap();
    let out = dir.path().join("got.json");
    // After the configuration has run and the sheet is open: wait for the
    // diagnostics, ask for hover on `V` of line 1, write both down.
    let probe = format!(
        r#"lua local ok, err = pcall(function()
  assert(vim.bo.filetype == "ohmsheet", "filetype " .. vim.bo.filetype)
  assert(vim.wait(60000, function() return #vim.diagnostic.get(0) > 0 end, 20), "diagnostics")
  local hover = vim.lsp.buf_request_sync(0, "textDocument/hover",
    {{ textDocument = {{ uri = vim.uri_from_bufnr(0) }}, position = {{ line = 0, character = 0 }} }}, 60000)
  local h = nil
  for _, a in pairs(hover or {{}}) do h = a.result end
  local f = io.open("{out}", "w")
  f:write(vim.fn.json_encode({{ diagnostics = vim.diagnostic.get(0), hover = h }}))
  f:close()
end)
if not ok then
  local f = io.open("{out}", "w"); f:write(vim.fn.json_encode({{ failure = tostring(err) }})); f:close()
end
vim.cmd("qall!")"#,
        out = out.display()
    );
    let child = nvim_in(nvim.as_ref(), dir.path())
        .args(["--headless", "-i", "NONE", "-n", "-u"])
        .arg(&config)
        .arg(&sheet)
        .arg("-c")
        .arg(probe)
        .env("PATH", path)
        .spawn()
        .expect("nvim starts");
    wait_for(child, 180);
    let text = std::fs::read_to_string(&out).unwrap_or_default();
    let got: Value = serde_json::from_str(&text).unwrap_or(Value::Null);
    assert!(got["failure"].is_null() && !got.is_null(), "{text}");
    // vim.diagnostic items: 0-based `lnum` and `col`; the code the command
    // line gives (docs/errors.md: unknown-name).
    let d = &got["diagnostics"][0];
    assert_eq!(d["lnum"], 2, "{text}");
    assert_eq!(d["col"], 8, "{text}");
    assert!(d["message"].as_str().unwrap_or("").contains("`Rr`"), "{text}");
    let hover = got["hover"]["contents"].to_string();
    assert!(hover.contains("12 V"), "{text}");
}
