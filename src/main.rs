mod cli;

use clap::Parser;
use cli::Args;

fn main() {
    let args = Args::parse();
    let code = match &args.command {
        Some(command) => {
            let stdout = std::io::stdout();
            let mut out = stdout.lock();
            match cli::run(command, &mut out) {
                Ok(code) => code,
                Err(f) => {
                    // A reader that went away (`| head`) is no failure: quiet.
                    if !f.message.is_empty() {
                        eprintln!("biasline: {}", f.message);
                    }
                    f.code
                }
            }
        }
        None => match cli::no_display() {
            Some(message) => {
                eprintln!("biasline: {message}");
                cli::EXIT_CANNOT
            }
            None => open_editor(args.file),
        },
    };
    std::process::exit(code);
}

#[cfg(feature = "gui")]
fn open_editor(file: Option<std::path::PathBuf>) -> i32 {
    match biasline::gui::run(file) {
        Ok(()) => cli::EXIT_CLEAN,
        Err(message) => {
            eprintln!("biasline: {message}");
            cli::EXIT_CANNOT
        }
    }
}

#[cfg(not(feature = "gui"))]
fn open_editor(_file: Option<std::path::PathBuf>) -> i32 {
    eprintln!(
        "biasline: this build has no editor (built without the `gui` feature); \
         use a subcommand such as `biasline check FILE`"
    );
    cli::EXIT_CANNOT
}
