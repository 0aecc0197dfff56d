//! All-or-nothing outputs of a command: every file a command writes is staged beside its
//! target and published together when the command succeeds (`kugel::io::atomic::OutputGroup`);
//! the "wrote FILE" lines a command announces are printed only after the publication, so a
//! line never names a file that is not there.

use std::cell::RefCell;

use kugel::io::atomic::OutputGroup;

/// Where an announcement goes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Stream {
    Stdout,
    Stderr,
}

thread_local! {
    static ANNOUNCED: RefCell<Option<Vec<(Stream, String)>>> = const { RefCell::new(None) };
}

/// Announces a written file: queued until the command's outputs are published when inside
/// [`all_or_nothing`], printed at once otherwise.
pub fn announce(stream: Stream, line: String) {
    let queued = ANNOUNCED.with(|a| match a.borrow_mut().as_mut() {
        Some(queue) => {
            queue.push((stream, line.clone()));
            true
        }
        None => false,
    });
    if !queued {
        print_line(stream, &line);
    }
}

/// `announce(Stream::Stderr, …)`.
pub fn wrote(line: String) {
    announce(Stream::Stderr, line);
}

fn print_line(stream: Stream, line: &str) {
    match stream {
        Stream::Stdout => println!("{line}"),
        Stream::Stderr => eprintln!("{line}"),
    }
}

/// Runs a command so that its outputs appear all together or not at all, then prints its
/// announcements.
pub fn all_or_nothing(command: impl FnOnce() -> anyhow::Result<()>) -> anyhow::Result<()> {
    let group = OutputGroup::begin()?;
    ANNOUNCED.with(|a| *a.borrow_mut() = Some(Vec::new()));
    let result = command();
    let lines = ANNOUNCED
        .with(|a| a.borrow_mut().take())
        .unwrap_or_default();
    result?;
    group.publish()?;
    for (stream, line) in lines {
        print_line(stream, &line);
    }
    Ok(())
}
