//! `/spread NAME[,NAME…]`: how far cells can move over the inputs'
//! tolerances — worst case, Monte Carlo and sensitivities, as
//! `ohmsheet spread` gives them, on the sheet as it stands in the session
//! (changes not yet saved included).

use super::{Reply, Session};
use crate::output::spread::Analyses;
use crate::spread::{monte_carlo, plan_for, sensitivities, worst_case, McOptions};

/// Monte Carlo samples a `/spread` draws (seed 1, as `spread` without
/// `--seed`), enough for the 1 % and 99 % points.
pub const SESSION_SAMPLES: usize = 10_000;

impl Session {
    pub(super) fn spread_cmd(&self, arg: &str) -> Reply {
        let names: Vec<String> = arg
            .split(',')
            .map(|s| s.trim().to_string())
            .filter(|s| !s.is_empty())
            .collect();
        if names.is_empty() {
            return Reply::refused("name the cells, e.g. /spread Vbus or /spread Vbus,Ibank\n");
        }
        if self.engine.model.spreads.is_empty() {
            return Reply::refused(
                "no input states a tolerance; write one after an input's value, \
                 e.g. `Zt = 6 % within 7.5 %` (docs/tolerances.md)\n",
            );
        }
        // A plain name must be a cell (with a suggestion when misspelt);
        // anything else is an expression, compiled like `--show`.
        for n in &names {
            let plain = n.chars().all(|c| c.is_alphanumeric() || c == '_');
            if plain && self.engine.model.id(n).is_none() {
                return Reply::refused(self.no_such_cell(n));
            }
        }
        let sheet = self.doc.sheet(&self.engine.model.sources);
        let plan = match plan_for(sheet, Some(&names)) {
            Ok(p) => p,
            Err(f) => {
                let text: String = f.diagnostics.iter().map(|d| d.render(&f.sources, self.color)).collect();
                return Reply::refused(text);
            }
        };
        let worst = worst_case(&plan);
        let mc = monte_carlo(
            &plan,
            &McOptions {
                samples: SESSION_SAMPLES,
                seed: 1,
                bins: 40,
                coverage: 0.95,
            },
        );
        let sens = sensitivities(&plan);
        let an = Analyses {
            plan: &plan,
            worst: Some(&worst),
            mc: Some(&mc),
            sens: Some(&sens),
            style: self.style,
        };
        Reply::ok(an.table())
    }
}
