//! Many files checked side by side: the runner's parallel scheme for a
//! folder (a file named alone spreads its lines instead, with
//! `check_reader_parallel`).
//!
//! Files are handed out a batch at a time to scoped worker threads, each
//! file checked whole on one thread into a `Recording`; the batch's
//! recordings are then replayed to the sink in the files' order, so the
//! report is the one `check_reader` gives file after file, and memory stays
//! bounded by the batch.

use super::{Recording, Runner, Summary};
use crate::check::rules::RuleLevels;
use crate::host::Host;
use std::fs::File;
use std::io::{self, BufReader};
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::atomic::{AtomicUsize, Ordering};

/// Files handed out to the worker threads at a time, so results are
/// reported in order while memory stays bounded.
const BATCH: usize = 256;

/// One file checked on a worker thread: its events, totals and read error.
type FileResult = (Recording, Summary, Option<io::Error>);

impl Runner<'_> {
    /// Checks reaction files on all cores and reports them in order. A file
    /// that cannot be read is skipped and returned with the reason; an
    /// error of the sink (writing the report) stops the run and is the `Err`.
    pub fn check_files(&mut self, files: &[PathBuf]) -> io::Result<Vec<(PathBuf, io::Error)>> {
        let threads = std::thread::available_parallelism().map_or(1, |n| n.get());
        let keep_passing = self.sink.wants_passing();
        let mut unreadable = Vec::new();
        for batch in files.chunks(BATCH) {
            let results = self.check_batch(batch, threads, keep_passing);
            for (path, (recording, summary, error)) in batch.iter().zip(results) {
                recording.replay(self.sink)?;
                self.absorb(&summary);
                if let Some(e) = error {
                    unreadable.push((path.clone(), e));
                }
            }
        }
        Ok(unreadable)
    }

    /// The batch's results, in its order.
    fn check_batch(
        &self,
        batch: &[PathBuf],
        threads: usize,
        keep_passing: bool,
    ) -> Vec<FileResult> {
        let (host, levels) = (&self.default_host, &self.levels);
        let next = AtomicUsize::new(0);
        let work = || {
            let mut done = Vec::new();
            loop {
                let index = next.fetch_add(1, Ordering::Relaxed);
                let Some(path) = batch.get(index) else {
                    return done;
                };
                done.push((index, check_one(host, levels, path, keep_passing)));
            }
        };
        let helpers = threads.min(batch.len()).saturating_sub(1);
        let finished = std::thread::scope(|scope| {
            let handles: Vec<_> = (0..helpers).map(|_| scope.spawn(work)).collect();
            let mut finished = work();
            for handle in handles {
                match handle.join() {
                    Ok(done) => finished.extend(done),
                    Err(panic) => std::panic::resume_unwind(panic),
                }
            }
            finished
        });
        let mut slots: Vec<Option<FileResult>> = Vec::new();
        slots.resize_with(batch.len(), || None);
        for (index, result) in finished {
            if let Some(slot) = slots.get_mut(index) {
                *slot = Some(result);
            }
        }
        // Every index was claimed by exactly one thread, so every slot is full.
        slots.into_iter().flatten().collect()
    }
}

/// One file checked alone into a recording, with the run's host and rule
/// levels.
fn check_one(
    host: &Option<Arc<Host>>,
    levels: &RuleLevels,
    path: &Path,
    keep_passing: bool,
) -> FileResult {
    let mut recording = Recording {
        events: Vec::new(),
        keep_passing,
    };
    let mut local = Runner::new(None, &mut recording).with_levels(levels.clone());
    local.default_host = host.clone();
    let error = File::open(path)
        .and_then(|file| {
            let reader = BufReader::with_capacity(1 << 16, file);
            local.check_reader(&path.display().to_string(), reader)
        })
        .err();
    let summary = local.summary;
    (recording, summary, error)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::base::diagnostic::Diagnostic;
    use crate::file::runner::{ReactionReport, Sink};

    /// Every report as one line of text: where, what, and each finding.
    #[derive(Default)]
    struct Lines(Vec<String>);

    impl Sink for Lines {
        fn reaction(&mut self, report: &ReactionReport<'_>) -> io::Result<()> {
            let findings: Vec<String> = report
                .diagnostics
                .iter()
                .map(|d| format!("{}: {} ({:?})", d.code.as_str(), d.message, d.help))
                .collect();
            self.0.push(format!(
                "{}:{} {} | {}",
                report.source,
                report.line,
                report.text,
                findings.join("; ")
            ));
            Ok(())
        }

        fn line_problem(&mut self, source: &str, _: &str, d: &Diagnostic) -> io::Result<()> {
            self.0
                .push(format!("{source}:{} {}", d.line, d.code.as_str()));
            Ok(())
        }

        fn finish(&mut self, _: &Summary) -> io::Result<()> {
            Ok(())
        }
    }

    /// What a run over `files` reports and counts.
    fn report(files: &[PathBuf], parallel: bool) -> (String, Summary, Vec<PathBuf>) {
        let mut sink = Lines::default();
        let host = Host::from_spec("ZrO2").ok();
        let mut checker = Runner::new(host, &mut sink);
        let mut unreadable = Vec::new();
        if parallel {
            unreadable = checker
                .check_files(files)
                .expect("the sink writes to memory")
                .into_iter()
                .map(|(path, _)| path)
                .collect();
        } else {
            for path in files {
                match File::open(path) {
                    Ok(file) => checker
                        .check_reader(&path.display().to_string(), BufReader::new(file))
                        .expect("the sink writes to memory"),
                    Err(_) => unreadable.push(path.clone()),
                }
            }
        }
        let summary = checker.finish().expect("the sink writes to memory");
        (sink.0.join("\n"), summary, unreadable)
    }

    #[test]
    fn files_side_by_side_report_as_one_after_another() {
        // More files than one batch, failing and passing, one missing, a
        // file with its own host and one relying on the run's default.
        let dir = tempfile::tempdir().expect("a temporary folder");
        let mut files = Vec::new();
        for i in 0..(BATCH + 45) {
            let path = dir.path().join(format!("f{i:04}.kvr"));
            let text = match i % 3 {
                0 => "Y2O3 -> Y_Zr' + O_O + V_O..\n".to_string(),
                1 => format!("host CeO2\nr{i}: Gd2O3 -> 2Gd_Ce' + 3O_O + V_O..\n"),
                _ => "nil -> e' + h.\nnil -> e' + h.\n".to_string(),
            };
            std::fs::write(&path, text).expect("written");
            files.push(path);
        }
        files.insert(100, dir.path().join("missing.kvr"));
        let (parallel, summary, unreadable) = report(&files, true);
        let (sequential, expected, expected_unreadable) = report(&files, false);
        assert_eq!(parallel, sequential);
        assert_eq!(summary, expected);
        assert_eq!(unreadable, expected_unreadable);
        assert_eq!(unreadable, [dir.path().join("missing.kvr")]);
        // The balanced form is attached in the runner, as for one file.
        assert!(parallel.contains("balanced, it reads"), "{parallel}");
        assert_eq!(summary.sources, BATCH as u64 + 45);
    }
}
