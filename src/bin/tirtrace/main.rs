//! The tirtrace command line. It is native only: clap (its parser) and rayon (its threads) are
//! not compiled for wasm32, where the page is the front end. Cargo still builds this binary when
//! it builds the integration tests for wasm32, so there it is an empty program.

#![cfg_attr(target_arch = "wasm32", no_main)]

#[cfg(not(target_arch = "wasm32"))]
mod cli;

#[cfg(not(target_arch = "wasm32"))]
fn main() -> std::process::ExitCode {
    cli::main()
}
