//! The one integration-test binary (`autotests = false` in Cargo.toml):
//! every file under tests/ is a module here, so the suite links once.

mod common;

mod batch_cases;
mod block_lanes;
mod check_cmd;
mod check_formats;
mod cli_batch;
mod cli_run;
mod closed_stdout;
mod comparisons;
mod confinement;
mod demo_sheets;
mod demo_verifiers;
mod demos;
mod engine_recompute;
mod errors_catalogue;
mod funcs_reference;
mod funcs_studies;
mod functions;
mod fuzz_regressions;
mod include;
mod kill_during_write;
mod language;
mod limits;
mod lines_rf;
mod local_override;
mod matching_pi_t;
mod misreadings;
mod network_reference;
mod network_solver;
mod networks;
mod output_options;
mod plot_render;
mod properties;
mod readme;
mod reference;
mod report;
mod report_browser;
mod scale_sheet;
mod search_sheet;
mod session_pty;
mod sweep;
mod two_ports;
mod watch;
