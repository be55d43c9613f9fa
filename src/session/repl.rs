//! The terminal side of a session: line editing, history, completion and
//! hints (rustyline), the questions asked before leaving or restoring, and
//! printing the answers. Only this file knows about rustyline.

use std::borrow::Cow;
use std::cell::RefCell;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::rc::Rc;

use rustyline::completion::{Completer, FilenameCompleter, Pair};
use rustyline::error::ReadlineError;
use rustyline::highlight::{CmdKind, Highlighter};
use rustyline::hint::{Hint, Hinter, HistoryHinter};
use rustyline::history::DefaultHistory;
use rustyline::validate::Validator;
use rustyline::{CompletionType, Config, Context, Editor, Helper};

use super::show;
use super::state::{plural, Action, Session, COMMANDS};
use crate::cli::{EXIT_ERROR, EXIT_OK};

type Shared = Rc<RefCell<Session>>;
type Ed = Editor<SessionHelper, DefaultHistory>;

/// Run an interactive session on `path` (or an unnamed sheet). Returns the
/// exit code.
pub fn run(path: Option<PathBuf>) -> i32 {
    let data_dir = dirs::data_dir().map(|d| d.join("ohmsheet"));
    let color = std::io::IsTerminal::is_terminal(&std::io::stdout()) && std::env::var_os("NO_COLOR").is_none();
    let (session, greet) = match Session::open(path.as_deref(), data_dir.clone(), color) {
        Ok(x) => x,
        Err(t) => {
            eprint!("{t}");
            return EXIT_ERROR;
        }
    };
    let shared: Shared = Rc::new(RefCell::new(session));
    let config = Config::builder()
        .auto_add_history(false)
        .history_ignore_space(true)
        .max_history_size(5000)
        .map(|b| b.completion_type(CompletionType::List))
        .map(|b| b.build())
        .unwrap_or_default();
    let mut rl: Ed = match Editor::with_config(config) {
        Ok(e) => e,
        Err(e) => {
            eprintln!("error: cannot start line editing: {e}");
            return EXIT_ERROR;
        }
    };
    rl.set_helper(Some(SessionHelper {
        s: shared.clone(),
        files: FilenameCompleter::new(),
        history: HistoryHinter::new(),
        color,
    }));
    let history = data_dir.as_ref().map(|d| d.join("history.txt"));
    if let Some(h) = &history {
        let _ = std::fs::create_dir_all(h.parent().unwrap_or(Path::new(".")));
        let _ = rl.load_history(h);
    }

    say(&format!(
        "ohmsheet {} session · {greet}/help lists the commands; /done leaves\n",
        env!("CARGO_PKG_VERSION")
    ));
    if !offer_recovery(&mut rl, &shared) {
        return EXIT_OK;
    }
    loop {
        let prompt = prompt(&shared.borrow());
        match rl.readline(&prompt) {
            Ok(line) => {
                if !line.trim().is_empty() {
                    let _ = rl.add_history_entry(line.as_str());
                    if let Some(h) = &history {
                        let _ = rl.append_history(h);
                    }
                }
                let reply = shared.borrow_mut().handle(&line);
                say(&reply.text);
                match reply.action {
                    Action::Continue => {}
                    Action::Leave => {
                        if ready_to_leave(&mut rl, &shared, false) {
                            break;
                        }
                    }
                    Action::Open(p) => {
                        if ready_to_leave(&mut rl, &shared, false) {
                            let color = shared.borrow().color;
                            // Let go of this sheet's journal first: opening
                            // the same sheet again is not a second session.
                            shared.borrow_mut().release_journal();
                            match Session::open(Some(&p), data_dir.clone(), color) {
                                Ok((s, greet)) => {
                                    let (style, polar) = {
                                        let old = shared.borrow();
                                        (old.style, old.polar)
                                    };
                                    *shared.borrow_mut() = s;
                                    let mut s = shared.borrow_mut();
                                    s.style = style;
                                    s.polar = polar;
                                    drop(s);
                                    say(&greet);
                                    if !offer_recovery(&mut rl, &shared) {
                                        return EXIT_OK;
                                    }
                                }
                                Err(t) => {
                                    say(&t);
                                    shared.borrow_mut().claim_journal();
                                }
                            }
                        }
                    }
                }
            }
            Err(ReadlineError::Interrupted) => {
                say("(line dropped; /done or Ctrl-D leaves)\n");
            }
            Err(ReadlineError::Eof) => {
                if ready_to_leave(&mut rl, &shared, true) {
                    break;
                }
            }
            Err(e) => {
                eprintln!("error: reading the terminal failed: {e}");
                if shared.borrow().dirty() {
                    eprintln!("your changes are kept in the journal and offered at the next start");
                }
                return EXIT_ERROR;
            }
        }
    }
    EXIT_OK
}

fn say(text: &str) {
    let mut out = std::io::stdout().lock();
    let _ = out.write_all(text.as_bytes());
    let _ = out.flush();
}

fn prompt(s: &Session) -> String {
    format!("{}{} ▸ ", s.display_name(), if s.dirty() { "*" } else { "" })
}

/// Ask a question; `None` when the input ends or is interrupted.
fn ask(rl: &mut Ed, question: &str) -> Option<String> {
    match rl.readline(question) {
        Ok(a) => Some(a.trim().to_string()),
        Err(_) => None,
    }
}

/// Offer unsaved work from an earlier session. Returns false when the
/// session should end at once (no answer: the journal is left alone).
fn offer_recovery(rl: &mut Ed, shared: &Shared) -> bool {
    let Some(rec) = shared.borrow().recovery() else {
        return true;
    };
    let (name, same) = {
        let s = shared.borrow();
        (s.display_name(), s.same_base(&rec))
    };
    let n = rec.entries.len();
    let now = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map_or(0, |d| d.as_secs());
    let mut text = format!(
        "\nUnsaved work from an earlier session on {name} was found: {n} change{} (started {} ago).\n",
        plural(n),
        ago(now.saturating_sub(rec.header.started))
    );
    for e in rec.entries.iter().take(12) {
        text.push_str(&format!("    {}\n", show::entry_text(e)));
    }
    if n > 12 {
        text.push_str(&format!("    … and {} more\n", n - 12));
    }
    if !same {
        text.push_str("  The sheet file has changed since; the changes will be applied to it as it is now.\n");
    }
    say(&text);
    loop {
        match ask(rl, "Restore it? [y]es / [n]o, throw it away: ").as_deref() {
            Some("y" | "yes" | "Y") => {
                let r = shared.borrow_mut().restore(&rec);
                say(&r);
                return true;
            }
            Some("n" | "no" | "N") => {
                shared.borrow_mut().discard_journal();
                say("thrown away\n");
                return true;
            }
            Some(_) => say("please answer y or n\n"),
            None => {
                say("\nleaving; the unsaved work stays in the journal for next time\n");
                return false;
            }
        }
    }
}

fn ago(secs: u64) -> String {
    match secs {
        0..=119 => format!("{secs} s"),
        120..=7199 => format!("{} min", secs / 60),
        7200..=172_799 => format!("{} h", secs / 3600),
        _ => format!("{} days", secs / 86400),
    }
}

/// Before leaving or opening another sheet: unsaved changes are saved,
/// thrown away, or the leaving is called off. `at_eof`: the input ended.
fn ready_to_leave(rl: &mut Ed, shared: &Shared, at_eof: bool) -> bool {
    if !shared.borrow().dirty() {
        shared.borrow_mut().discard_journal();
        return true;
    }
    let (n, named) = {
        let s = shared.borrow();
        (s.unsaved_count().max(1), s.path.clone())
    };
    let question = match &named {
        Some(p) => format!(
            "{n} unsaved change{}. Save to {} first? [y]es / [n]o, throw away / [c]ancel: ",
            plural(n),
            p.display()
        ),
        None => format!(
            "{n} unsaved change{}. Save first? a file name / [n]o, throw away / [c]ancel: ",
            plural(n)
        ),
    };
    loop {
        let Some(a) = ask(rl, &question) else {
            if at_eof {
                say("\nthe unsaved changes stay in the journal and are offered at the next start\n");
                return true;
            }
            return false;
        };
        match a.as_str() {
            "n" | "no" | "N" => {
                shared.borrow_mut().discard_journal();
                return true;
            }
            "c" | "cancel" | "" => return false,
            "y" | "yes" | "Y" if named.is_some() => {
                let r = shared.borrow_mut().save(None);
                match r {
                    Ok(t) => {
                        say(&t);
                        return true;
                    }
                    Err(t) => say(&t),
                }
            }
            "y" | "yes" | "Y" => say("give the file name to save to\n"),
            file if named.is_none() => {
                let r = shared.borrow_mut().save(Some(PathBuf::from(file)));
                match r {
                    Ok(t) => {
                        say(&t);
                        return true;
                    }
                    Err(t) => say(&t),
                }
            }
            _ => say("please answer y, n or c\n"),
        }
    }
}

// ---- completion and hints ----

struct SessionHelper {
    s: Shared,
    files: FilenameCompleter,
    history: HistoryHinter,
    color: bool,
}

/// A hint shown after the cursor; some can be taken with →, others are
/// only information.
struct Tip {
    display: String,
    completion: Option<String>,
}

impl Hint for Tip {
    fn display(&self) -> &str {
        &self.display
    }
    fn completion(&self) -> Option<&str> {
        self.completion.as_deref()
    }
}

fn is_word(c: char) -> bool {
    c.is_alphanumeric() || c == '_'
}

/// Start of the word that ends at `pos`.
fn word_start(line: &str, pos: usize) -> usize {
    line[..pos]
        .char_indices()
        .rev()
        .take_while(|&(_, c)| is_word(c))
        .last()
        .map_or(pos, |(i, _)| i)
}

impl SessionHelper {
    fn words(&self, cells: bool, funcs: bool, units: bool) -> Vec<(String, String)> {
        let mut v: Vec<(String, String)> = Vec::new();
        if cells {
            let s = self.s.borrow();
            v.extend(s.cell_names().map(|n| (n.to_string(), n.to_string())));
        }
        if funcs {
            v.extend(
                crate::funcs::library()
                    .iter()
                    .map(|f| (f.name.to_string(), format!("{}(", f.name))),
            );
            v.push(("pi".into(), "pi".into()));
        }
        if units {
            v.extend(crate::units::table::all_symbols().map(|u| (u.to_string(), u.to_string())));
        }
        v
    }
}

impl Completer for SessionHelper {
    type Candidate = Pair;

    fn complete(&self, line: &str, pos: usize, ctx: &Context<'_>) -> rustyline::Result<(usize, Vec<Pair>)> {
        let before = &line[..pos];
        if let Some(cmd) = before.strip_prefix('/') {
            if !cmd.contains(' ') {
                let v = COMMANDS
                    .iter()
                    .filter(|c| c.0.starts_with(cmd))
                    .map(|c| Pair {
                        display: format!("/{}", c.0),
                        replacement: format!("{} ", c.0),
                    })
                    .collect();
                return Ok((1, v));
            }
            let name = cmd.split_whitespace().next().unwrap_or("");
            if matches!(name, "open" | "save") {
                return self.files.complete(line, pos, ctx);
            }
        }
        let start = word_start(line, pos);
        let word = &before[start..];
        let pool = if before.starts_with("/about ") {
            self.words(true, true, true)
        } else if before.starts_with('/') {
            self.words(true, false, false)
        } else {
            // After a number and a space, a unit is likely.
            let after_number = before[..start].trim_end().ends_with(|c: char| c.is_ascii_digit())
                || before[..start].ends_with(|c: char| c.is_ascii_digit());
            self.words(!after_number, !after_number, true)
        };
        let mut v: Vec<Pair> = pool
            .into_iter()
            .filter(|(d, _)| d.starts_with(word))
            .map(|(display, replacement)| Pair { display, replacement })
            .collect();
        v.sort_by(|a, b| a.display.cmp(&b.display));
        v.dedup_by(|a, b| a.display == b.display);
        Ok((start, v))
    }
}

impl Hinter for SessionHelper {
    type Hint = Tip;

    fn hint(&self, line: &str, pos: usize, ctx: &Context<'_>) -> Option<Tip> {
        if pos < line.len() || line.is_empty() {
            return None;
        }
        // A command being typed: the rest of its name and its argument.
        if let Some(cmd) = line.strip_prefix('/') {
            if !cmd.contains(' ') {
                let mut m = COMMANDS.iter().filter(|c| c.0.starts_with(cmd));
                if let (Some(c), None) = (m.next(), m.next()) {
                    let rest = &c.0[cmd.len()..];
                    let arg = if c.1.is_empty() {
                        String::new()
                    } else {
                        format!(" {}", c.1)
                    };
                    return Some(Tip {
                        display: format!("{rest}{arg}   — {}", c.2),
                        completion: Some(rest.to_string()),
                    });
                }
            }
            return None;
        }
        // Just after `f(`: the function's parameters.
        if let Some(head) = line.strip_suffix('(') {
            let name = &head[word_start(head, head.len())..];
            if let Some((_, f)) = crate::funcs::find(name) {
                let sig = crate::engine::model::signature(f);
                let params = sig.split_once('(').map_or("", |(_, p)| p);
                return Some(Tip {
                    display: format!("{params}  — {}", f.summary),
                    completion: None,
                });
            }
        }
        // A cell's name alone: its current value.
        let t = line.trim();
        if !t.is_empty() && t.chars().all(is_word) {
            let s = self.s.borrow();
            if let Some(id) = s.engine.model.id(t) {
                return Some(Tip {
                    display: format!("   ⇒ {}", s.cell_value(id)),
                    completion: None,
                });
            }
        }
        self.history.hint(line, pos, ctx).map(|h| Tip {
            display: h.clone(),
            completion: Some(h),
        })
    }
}

impl Highlighter for SessionHelper {
    fn highlight_hint<'h>(&self, hint: &'h str) -> Cow<'h, str> {
        if self.color {
            Cow::Owned(format!("\x1b[2m{hint}\x1b[0m"))
        } else {
            Cow::Borrowed(hint)
        }
    }
    fn highlight_char(&self, _line: &str, _pos: usize, _kind: CmdKind) -> bool {
        false
    }
}

impl Validator for SessionHelper {}
impl Helper for SessionHelper {}
