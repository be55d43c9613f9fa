//! The `/` commands of the terminal session: looking cells up, removing
//! one, undoing, how values are shown, opening and saving.

use std::path::PathBuf;

use super::journal::Entry;
use super::{show, Action, Edit, Reply, Session, Shown};
use crate::diag::did_you_mean;
use crate::engine::CellId;

/// Session commands: name, argument, what it does. `/help` prints this.
pub const COMMANDS: &[(&str, &str, &str)] = &[
    ("cells", "[text]", "list the cells (those whose name contains text)"),
    (
        "why",
        "NAME",
        "how a cell gets its value: formula and inputs, as a tree",
    ),
    ("feeds", "NAME", "the cells that use a cell, directly or further on"),
    ("remove", "NAME", "remove a cell no other cell uses"),
    ("back", "", "undo the last change"),
    ("forward", "", "make again the change /back took back"),
    ("show", "[digits N | polar | rect]", "how values are shown"),
    ("about", "NAME", "a function, unit or cell explained"),
    (
        "spread",
        "NAME[,NAME…]",
        "how far cells can move over the inputs' tolerances: worst case, Monte Carlo, sensitivities",
    ),
    ("open", "FILE", "work on another sheet"),
    ("save", "[FILE]", "write the sheet (to FILE, or where it came from)"),
    (
        "save!",
        "",
        "write the sheet over its file even though the file changed since it was read",
    ),
    ("done", "", "leave (asks first if changes are unsaved)"),
    ("help", "", "this list"),
];

impl Session {
    // ---- commands ----

    pub(super) fn command(&mut self, cmd: &str) -> Reply {
        let (name, arg) = match cmd.split_once(char::is_whitespace) {
            Some((n, a)) => (n, a.trim()),
            None => (cmd, ""),
        };
        match name {
            "cells" => Reply::ok(show::cells(self, arg)),
            "why" => self.with_cell(arg, |s, id| Reply::ok(show::why(s, id))),
            "feeds" => self.with_cell(arg, |s, id| Reply::ok(show::feeds(s, id))),
            "remove" => self.remove(arg, true),
            "back" => self.back(true),
            "forward" => self.forward(true),
            "show" => self.show_cmd(arg),
            "about" => Reply::ok(show::about(self, arg)),
            "spread" => self.spread_cmd(arg),
            "open" => {
                if arg.is_empty() {
                    return Reply::refused("/open needs a file name: /open FILE\n");
                }
                Reply {
                    text: String::new(),
                    action: Action::Open(PathBuf::from(arg)),
                    refused: false,
                }
            }
            "save" => match self.save(if arg.is_empty() { None } else { Some(PathBuf::from(arg)) }) {
                Ok(t) => Reply::ok(t),
                Err(t) => Reply::refused(t),
            },
            "save!" if arg.is_empty() => match self.save_over() {
                Ok(t) => Reply::ok(t),
                Err(t) => Reply::refused(t),
            },
            "save!" => Reply::refused("/save! takes no file name: it writes the sheet's own file\n"),
            "done" => Reply {
                text: String::new(),
                action: Action::Leave,
                refused: false,
            },
            "help" | "" => Reply::ok(show::help()),
            _ => {
                let names = COMMANDS.iter().map(|c| c.0);
                let hint = match did_you_mean(name, names) {
                    Some(s) => format!(" (did you mean /{s}?)"),
                    None => String::new(),
                };
                Reply::refused(format!("no command /{name}{hint}; /help lists them\n"))
            }
        }
    }

    /// Look a cell name up for a command, with a suggestion when misspelt.
    fn with_cell(&self, arg: &str, f: impl FnOnce(&Session, CellId) -> Reply) -> Reply {
        if arg.is_empty() {
            return Reply::refused("name a cell, e.g. /why I\n");
        }
        match self.engine.model.id(arg) {
            Some(id) => f(self, id),
            None => Reply::refused(self.no_such_cell(arg)),
        }
    }

    pub(super) fn no_such_cell(&self, name: &str) -> String {
        let names = self.engine.model.defs().map(|(_, c)| c.name.as_str());
        match did_you_mean(name, names) {
            Some(s) => format!("no cell `{name}` (did you mean `{s}`?)\n"),
            None => format!("no cell `{name}`; /cells lists them\n"),
        }
    }

    pub(super) fn remove(&mut self, name: &str, journal: bool) -> Reply {
        if name.is_empty() {
            return Reply::refused("name the cell to remove: /remove NAME\n");
        }
        let Some(id) = self.engine.model.id(name) else {
            return Reply::refused(self.no_such_cell(name));
        };
        let users = &self.engine.model.dependents[id as usize];
        if !users.is_empty() {
            let names: Vec<String> = users.iter().map(|&u| show::cell_label(&self.engine.model, u)).collect();
            return Reply::refused(format!(
                "`{name}` is still used by {}; change or remove {} first\n",
                names.join(", "),
                if names.len() == 1 { "it" } else { "them" }
            ));
        }
        let Some(idx) = self.doc.find_def(name) else {
            return Reply::refused(self.no_such_cell(name));
        };
        match self.apply(Edit::Delete(idx), false) {
            Ok((inverse, _)) => {
                self.push_undo(inverse);
                let mut out = String::new();
                if journal {
                    self.record(Entry::Remove(name.to_string()), &mut out);
                }
                out.push_str(&format!("removed {name}\n"));
                Reply::ok(out)
            }
            Err(t) => Reply::refused(t),
        }
    }

    pub(super) fn back(&mut self, journal: bool) -> Reply {
        self.step(false, journal)
    }

    /// `/forward`: make again the change the last `/back` took back (as
    /// long as no other change was made since).
    pub(super) fn forward(&mut self, journal: bool) -> Reply {
        self.step(true, journal)
    }

    /// `/back` (from the undo stack to the redo stack) or `/forward` (the
    /// other way round).
    fn step(&mut self, forward: bool, journal: bool) -> Reply {
        let popped = if forward { self.redo.pop() } else { self.undo.pop() };
        let Some((edit, version)) = popped else {
            return Reply::refused(if forward {
                "nothing to redo: /forward makes again a change /back took back\n"
            } else {
                "nothing to undo\n"
            });
        };
        let what = match (&edit, forward) {
            (Edit::Replace(_, l) | Edit::Insert(_, l), false) => format!("back to: {}", l.text.trim()),
            (Edit::Replace(_, l) | Edit::Insert(_, l), true) => format!("forward to: {}", l.text.trim()),
            (Edit::Delete(i), false) => format!("took back: {}", self.doc.lines[*i].text.trim()),
            (Edit::Delete(i), true) => format!("forward: took out {}", self.doc.lines[*i].text.trim()),
        };
        match self.apply(edit, true) {
            Ok((inverse, shown)) => {
                let other = if forward { &mut self.undo } else { &mut self.redo };
                other.push((inverse, self.version));
                self.version = version;
                let mut out = String::new();
                if journal {
                    self.record(if forward { Entry::Forward } else { Entry::Back }, &mut out);
                }
                out.push_str(&what);
                out.push('\n');
                let all: Vec<&Shown> = shown.iter().collect();
                out.push_str(&show::changes(&all));
                Reply::ok(out)
            }
            Err(t) => Reply::refused(t),
        }
    }

    fn show_cmd(&mut self, arg: &str) -> Reply {
        let words: Vec<&str> = arg.split_whitespace().collect();
        match words.as_slice() {
            [] => {}
            ["polar"] => self.polar = true,
            ["rect"] => self.polar = false,
            ["digits", n] => match n.parse::<usize>() {
                Ok(d) if (1..=15).contains(&d) => self.style.digits = d,
                _ => return Reply::refused("digits go from 1 to 15, e.g. /show digits 6\n"),
            },
            _ => return Reply::refused("/show takes `digits N`, `polar` or `rect`\n"),
        }
        Reply::ok(format!(
            "values shown {} with {} significant digits\n",
            if self.polar {
                "in polar form (m ∠ θ°)"
            } else {
                "in rectangular form (a + jb)"
            },
            self.style.digits
        ))
    }
}
