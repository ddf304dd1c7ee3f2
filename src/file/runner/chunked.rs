//! The chunked parallel run of one file: lines read a chunk at a time, the
//! chunk's `host` lines found first (in order, on one thread), then every
//! other line prepared on any core against the host in force at it, and
//! the chunk reported in order while the next one is prepared.

use super::Runner;
use super::line::{Prepared, follow, line_content, prepare_line};
use super::stream::{Leftover, SourceState};
use crate::file::reader::{HostTracker, Line, classify, read_reaction};
use crate::host::Host;
use std::io::{self, BufRead};
use std::sync::Arc;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::mpsc;

/// Lines read per chunk by `check_reader_parallel`.
const CHUNK_LINES: usize = 256;

/// Consecutive lines of a source, read into one buffer.
#[derive(Default)]
struct Chunk {
    bytes: Vec<u8>,
    /// Each line's range in `bytes`, line ending excluded.
    ranges: Vec<std::ops::Range<usize>>,
    first_number: u32,
}

impl Chunk {
    /// Reads up to `CHUNK_LINES` lines into the buffers of `reuse`.
    fn read(reader: &mut impl BufRead, first_number: u32, reuse: Chunk) -> io::Result<Chunk> {
        let mut chunk = reuse;
        chunk.bytes.clear();
        chunk.ranges.clear();
        chunk.first_number = first_number;
        while chunk.ranges.len() < CHUNK_LINES {
            let start = chunk.bytes.len();
            if reader.read_until(b'\n', &mut chunk.bytes)? == 0 {
                break;
            }
            let length = line_content(&chunk.bytes[start..]).len();
            chunk.ranges.push(start..start + length);
        }
        Ok(chunk)
    }

    fn count(&self) -> u32 {
        u32::try_from(self.ranges.len()).unwrap_or(u32::MAX)
    }

    fn is_empty(&self) -> bool {
        self.ranges.is_empty()
    }

    /// (line number, byte range) of each line.
    fn lines(&self) -> impl Iterator<Item = (u32, std::ops::Range<usize>)> + '_ {
        (self.first_number..).zip(self.ranges.iter().cloned())
    }

    /// Finds the chunk's `host` lines (rare; in order, on one thread) so
    /// that every other line can then be prepared on any thread against the
    /// host in force at it. `hosts` is the state before the first line.
    fn plan(self, mut hosts: HostTracker) -> ChunkPlan {
        let mut declared: Vec<(usize, Prepared)> = Vec::new();
        let mut segments: Vec<(usize, HostTracker)> = vec![(0, hosts.clone())];
        for (index, (number, range)) in self.lines().enumerate() {
            let bytes = self.bytes.get(range).unwrap_or_default();
            // Only `host` lines, and while no host is in force a reaction
            // with one over its arrow, change the host in force.
            let over_arrow = hosts.host().is_none() && may_set_text_over_arrow(bytes);
            if !over_arrow && !may_be_host_line(bytes) {
                continue;
            }
            let Ok(text) = std::str::from_utf8(bytes) else {
                continue;
            };
            match classify(text) {
                Line::Host(span) => {
                    let result = Host::parse(text, span).map(Arc::new);
                    hosts.declare(number, &result);
                    segments.push((index + 1, hosts.clone()));
                    declared.push((index, Prepared::Host(result)));
                }
                Line::Reaction { reaction, .. } if over_arrow => {
                    let chosen = hosts.for_reaction(&read_reaction(text, reaction));
                    if chosen.taken.is_some() {
                        // The line itself is prepared with the state before it.
                        hosts.follow(&chosen);
                        segments.push((index + 1, hosts.clone()));
                    }
                }
                _ => {}
            }
        }
        ChunkPlan {
            chunk: self,
            declared,
            segments,
            hosts_after: hosts,
            next_block: AtomicUsize::new(0),
        }
    }
}

/// Lines handed out to a preparing thread at a time.
const BLOCK_LINES: usize = 32;

/// A chunk ready to be prepared by several threads at once.
struct ChunkPlan {
    chunk: Chunk,
    /// (index, prepared) of the chunk's host lines, by increasing index.
    declared: Vec<(usize, Prepared)>,
    /// (first index, host in force from there on), by increasing index.
    segments: Vec<(usize, HostTracker)>,
    hosts_after: HostTracker,
    /// The next block of lines no thread has claimed.
    next_block: AtomicUsize,
}

impl ChunkPlan {
    /// Claims blocks of lines until none are left and prepares them;
    /// returns (block number, prepared lines) for each block claimed.
    fn work(&self) -> Vec<(usize, Vec<Prepared>)> {
        let ranges = &self.chunk.ranges;
        let mut done = Vec::new();
        loop {
            let block = self.next_block.fetch_add(1, Ordering::Relaxed);
            let start = block.saturating_mul(BLOCK_LINES);
            let Some(lines) = ranges.get(start..(start + BLOCK_LINES).min(ranges.len())) else {
                return done;
            };
            if lines.is_empty() {
                return done;
            }
            let prepared = lines
                .iter()
                .enumerate()
                .map(|(offset, range)| self.prepare(start + offset, range.clone()))
                .collect();
            done.push((block, prepared));
        }
    }

    fn prepare(&self, index: usize, range: std::ops::Range<usize>) -> Prepared {
        if self
            .declared
            .binary_search_by_key(&index, |(i, _)| *i)
            .is_ok()
        {
            return Prepared::Skip;
        }
        let at = self.segments.partition_point(|(start, _)| *start <= index);
        let Some((_, hosts)) = self.segments.get(at.saturating_sub(1)) else {
            return Prepared::Skip;
        };
        let offset = u32::try_from(index).unwrap_or(u32::MAX);
        let number = self.chunk.first_number.saturating_add(offset);
        prepare_line(
            number,
            self.chunk.bytes.get(range).unwrap_or_default(),
            hosts,
        )
    }

    /// Puts the blocks the threads prepared, as (block, thread, lines),
    /// back in order.
    fn assemble(self, mut blocks: Vec<(usize, usize, Vec<Prepared>)>) -> PreparedChunk {
        blocks.sort_unstable_by_key(|(block, _, _)| *block);
        let mut lines: Vec<Prepared> = Vec::with_capacity(self.chunk.ranges.len());
        let mut owners = Vec::with_capacity(blocks.len());
        for (_, owner, block) in blocks {
            lines.extend(block);
            owners.push(owner);
        }
        for (index, prepared) in self.declared {
            if let Some(slot) = lines.get_mut(index) {
                *slot = prepared;
            }
        }
        PreparedChunk {
            chunk: self.chunk,
            lines,
            owners,
            hosts_after: self.hosts_after,
        }
    }
}

/// Whether a line could be a `host` declaration (cheap; false only when it
/// certainly is not).
fn may_be_host_line(bytes: &[u8]) -> bool {
    let start = bytes
        .iter()
        .position(|b| !b.is_ascii_whitespace())
        .unwrap_or(bytes.len());
    match bytes.get(start) {
        Some(b) if !b.is_ascii() => true,
        _ => bytes.get(start..).unwrap_or_default().starts_with(b"host"),
    }
}

/// Whether a line could set text over its arrow (cheap; false only when
/// it certainly does not): `\xrightarrow` and its kin, `\overset`, `\stackrel`.
fn may_set_text_over_arrow(bytes: &[u8]) -> bool {
    bytes.contains(&b'\\')
        && (bytes.windows(2).any(|w| w == b"\\x")
            || bytes.windows(8).any(|w| w == b"\\overset")
            || bytes.windows(9).any(|w| w == b"\\stackrel"))
}

/// A chunk with every line prepared, and the host in force after it.
struct PreparedChunk {
    chunk: Chunk,
    lines: Vec<Prepared>,
    /// Which thread prepared each block of lines: 0 the reporting thread,
    /// h + 1 helper h.
    owners: Vec<usize>,
    hosts_after: HostTracker,
}

/// Work for a helper thread: a chunk to prepare, and memory it allocated
/// earlier to free.
struct Job {
    plan: Arc<ChunkPlan>,
    garbage: Vec<Leftover>,
}

/// The reporting thread's handle on a helper thread.
struct Helper {
    jobs: mpsc::Sender<Job>,
    results: mpsc::Receiver<Vec<(usize, Vec<Prepared>)>>,
    /// What the helper prepared and the reports are done with.
    garbage: Vec<Leftover>,
}

impl Runner<'_> {
    /// Checks a reaction file like `check_reader`, with the work that needs
    /// no cross-line state (parsing, the three balances, hashing for the
    /// cross-line rules) spread over all cores a chunk of lines at a time.
    /// Reports come out in the same order and are the same as
    /// `check_reader`'s; memory stays bounded by the chunk size. For files,
    /// not for interactive input: a chunk is reported when it is full.
    pub fn check_reader_parallel(&mut self, name: &str, reader: impl BufRead) -> io::Result<()> {
        let helpers = std::thread::available_parallelism()
            .map_or(1, |n| n.get())
            .saturating_sub(1);
        if helpers == 0 {
            return self.check_reader(name, reader);
        }
        std::thread::scope(|scope| {
            let mut crew = Vec::with_capacity(helpers);
            for _ in 0..helpers {
                let (jobs, inbox) = mpsc::channel::<Job>();
                let (outbox, results) = mpsc::channel::<Vec<(usize, Vec<Prepared>)>>();
                scope.spawn(move || {
                    for Job { plan, garbage } in inbox {
                        drop(garbage);
                        let blocks = plan.work();
                        // Let go of the plan before answering, so that the
                        // reporting thread owns it again.
                        drop(plan);
                        if outbox.send(blocks).is_err() {
                            return;
                        }
                    }
                });
                crew.push(Helper {
                    jobs,
                    results,
                    garbage: Vec::new(),
                });
            }
            self.check_chunks(name, reader, &mut crew)
        })
    }

    /// The reporting side of `check_reader_parallel`: reads chunks, hands
    /// each to the crew (and works on it too), and reports the previous one
    /// meanwhile.
    fn check_chunks(
        &mut self,
        name: &str,
        mut reader: impl BufRead,
        crew: &mut [Helper],
    ) -> io::Result<()> {
        self.summary.sources += 1;
        let mut state = SourceState::new(self.default_host.clone());
        let mut next_number: u32 = 1;
        let mut pending: Option<PreparedChunk> = None;
        let mut spare = Chunk::default();
        let crew_failed = || io::Error::other("a checking thread stopped");
        loop {
            let chunk = Chunk::read(&mut reader, next_number, std::mem::take(&mut spare))?;
            next_number = next_number.saturating_add(chunk.count());
            let done = chunk.is_empty();
            // The host in force at the chunk's start is the one at the end of
            // the previous chunk, known before that chunk is reported.
            let hosts = pending.as_ref().map_or_else(
                || state.hosts.clone(),
                |p: &PreparedChunk| p.hosts_after.clone(),
            );
            let plan = Arc::new(chunk.plan(hosts));
            // Memory is freed fastest by the thread that allocated it, so what
            // a helper prepared goes back to it to be dropped.
            for helper in crew.iter_mut() {
                let job = Job {
                    plan: Arc::clone(&plan),
                    garbage: std::mem::take(&mut helper.garbage),
                };
                helper.jobs.send(job).map_err(|_| crew_failed())?;
            }
            if let Some(p) = pending.take() {
                spare = self.finish_chunk(name, p, &mut state, crew)?;
            }
            let mut blocks: Vec<(usize, usize, Vec<Prepared>)> = plan
                .work()
                .into_iter()
                .map(|(block, lines)| (block, 0, lines))
                .collect();
            for (index, helper) in crew.iter().enumerate() {
                let done = helper.results.recv().map_err(|_| crew_failed())?;
                blocks.extend(
                    done.into_iter()
                        .map(|(block, lines)| (block, index + 1, lines)),
                );
            }
            if done {
                return self.finish_source(name, &mut state);
            }
            let plan = Arc::try_unwrap(plan).map_err(|_| crew_failed())?;
            pending = Some(plan.assemble(blocks));
        }
    }

    /// Reports a prepared chunk; returns its buffers for the next read.
    fn finish_chunk(
        &mut self,
        name: &str,
        chunk: PreparedChunk,
        state: &mut SourceState,
        crew: &mut [Helper],
    ) -> io::Result<Chunk> {
        let PreparedChunk {
            chunk,
            lines,
            owners,
            ..
        } = chunk;
        for (index, ((number, range), prepared)) in chunk.lines().zip(lines).enumerate() {
            let bytes = chunk.bytes.get(range).unwrap_or_default();
            follow(&mut state.hosts, number, &prepared);
            self.finish_line(name, number, bytes, prepared, state)?;
            let owner = owners.get(index / BLOCK_LINES).copied().unwrap_or(0);
            if let Some(helper) = owner.checked_sub(1).and_then(|h| crew.get_mut(h)) {
                helper.garbage.append(&mut state.leftovers);
            } else {
                state.leftovers.clear();
            }
        }
        Ok(chunk)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::file::runner::{Recording, Summary};

    /// Everything a run reports, as text, and its totals.
    fn run(bytes: &[u8], parallel: bool) -> (String, Summary) {
        let mut recording = Recording {
            events: Vec::new(),
            keep_passing: true,
        };
        let mut checker = Runner::new(None, &mut recording);
        if parallel {
            checker
                .check_reader_parallel("f.kvr", bytes)
                .expect("in memory");
        } else {
            checker.check_reader("f.kvr", bytes).expect("in memory");
        }
        let summary = checker.finish().expect("in memory");
        (format!("{:#?}", recording.events), summary)
    }

    #[test]
    fn chunked_parallel_check_reports_exactly_what_the_line_by_line_check_does() {
        // Reactions and hosts from the notation grammar (grammar/notation.md);
        // every kind of line, and host changes just before and after chunk
        // boundaries, so a host applied to the wrong lines would show.
        let reactions = [
            "Y2O3 -> 2Y_Zr' + 3O_O + V_O..",
            "O_O -> V_O.. + 2e' + 1/2 O2(g)",
            "nil -> V_Zr'''' + 2V_O••",
            "Y2O3 -> 2Y_Zr' + 3O_O + V_O.",
            "Nb2O5 -> 2Nb_Ti. + 4O_O + 2e' + 1/2 O2(g)",
            r"\mathrm{Y_2O_3} \rightarrow 2\,\mathrm{Y}_{\mathrm{Zr}}^{\prime} + 3\,\mathrm{O}_{\mathrm{O}}^{\times} + V_{\mathrm{O}}^{\bullet\bullet}",
            r"\mathrm{Y_2O_3} \xrightarrow{\mathrm{CeO_2}} 2\,\mathrm{Y}_{\mathrm{Ce}}^{\prime} + 3\,\mathrm{O}_{\mathrm{O}}^{\times} + V_{\mathrm{O}}^{\bullet\bullet}",
            r"Y2O3 \overset{\mathrm{ZrO_2}}{\longrightarrow} 2Y_Zr' + 3O_O + V_O..",
            "nil -> e' + h.",
            "O_O -> V_O +",
        ];
        let hosts = [
            "host ZrO2",
            "host TiO2",
            "host Zr2",
            "  host CeO2 # comment",
            // Magnetite needs its sites stated: no host after it, so the
            // host over an arrow below is taken.
            "host Fe3O4",
        ];
        let mut text: Vec<u8> = Vec::new();
        let lines = 2 * CHUNK_LINES + 700;
        for i in 0..lines {
            let line: Vec<u8> = match i % 997 {
                _ if i % CHUNK_LINES == 0 || i % CHUNK_LINES == CHUNK_LINES - 1 || i % 613 == 5 => {
                    hosts[(i / 7) % hosts.len()].as_bytes().to_vec()
                }
                1 => b"# a comment".to_vec(),
                2 => Vec::new(),
                3 => b"K red = 1e-20".to_vec(),
                4 => b"r1: O_O -> V_O.. + 2e' + \xff O2(g)".to_vec(),
                5 => b"r1: nil -> e' + h.".to_vec(),
                _ => format!("r{}: {}", i % 1500, reactions[i % reactions.len()]).into_bytes(),
            };
            text.extend_from_slice(&line);
            text.extend_from_slice(if i % 5 == 0 { b"\r\n" } else { b"\n" });
        }
        let (sequential, sequential_summary) = run(&text, false);
        let (parallel, parallel_summary) = run(&text, true);
        assert_eq!(sequential_summary, parallel_summary);
        assert!(sequential_summary.reactions > lines as u64 / 2);
        assert!(sequential_summary.errors > 0 && sequential_summary.warnings > 0);
        assert!(sequential == parallel, "the two runs report differently");
        // A file without a final newline, and an empty one.
        for text in [&b"host ZrO2\nnil -> e' + h."[..], b""] {
            assert_eq!(run(text, false), run(text, true));
        }
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig::with_cases(24))]

        /// Any mix of lines, host changes and stray bytes: the chunked check
        /// reports what the line-by-line one does.
        #[test]
        fn chunked_and_line_by_line_agree_on_any_file(
            picks in proptest::collection::vec((0usize..16, proptest::prelude::any::<u8>()), 0..900)
        ) {
            const PIECES: [&[u8]; 16] = [
                b"host ZrO2",
                b"host TiO2",
                b"host Q9",
                b"  host  CeO2  # c",
                b"hostess: nil -> e' + h.",
                b"r: O_O -> V_O.. + 2e' + 1/2 O2(g)",
                b"r: Y2O3 -> 2Y_Zr' + 3O_O + V_O.",
                b"nil -> V_Zr'''' + 2V_O",
                br"\mathrm{O}_{\mathrm{O}} \rightarrow V_{O}^{\bullet\bullet} + 2e'",
                b"K red = 1e-20",
                b"",
                b"# comment",
                b"O_O -> (",
                b"\xe2\x86",
                br"Y2O3 \xrightarrow{ZrO2} 2Y_Zr' + 3O_O + V_O..",
                br"Y2O3 \stackrel{\mathrm{CeO_2}}{\rightarrow} 2Y_Ce' + 3O_O + V_O..",
            ];
            let mut text = Vec::new();
            for (piece, byte) in &picks {
                text.extend_from_slice(PIECES[*piece]);
                if *byte < 8 {
                    text.push(*byte | 0x80);
                }
                text.extend_from_slice(if *byte % 7 == 0 { b"\r\n" } else { b"\n" });
            }
            proptest::prop_assert_eq!(run(&text, false), run(&text, true));
        }
    }
}
