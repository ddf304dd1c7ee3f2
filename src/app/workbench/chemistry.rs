//! The workbench's chemistry commands: thin layers over the library that
//! print what the matching `lacuna` command prints.
//!
//! In: the session (its host, reactions and the model lines kept from
//! loaded files) and the command's words. Out: `/balance WHICH` balances a
//! session reaction (`lacuna::balance`) and offers a unique answer for
//! `/take`; `/dope OXIDE [SITE]` ranks the incorporation mechanisms in the
//! session's host (`lacuna::generate::dope`); `/law [WHICH...]` writes mass-action laws
//! (`lacuna::model::laws`, the path `lacuna law` takes, over the session's
//! reactions and kept model lines given to `lacuna::model::builder`);
//! `/brouwer [WHICH...]`
//! builds a model of the chosen reactions and the kept model lines
//! (`lacuna::model::builder`; nothing is written out and read back) and
//! prints its exact regimes
//! (`lacuna::solve::regimes`), ordered along pO2 when K values and a temperature
//! allow it, else every regime with the plain statement that K values are
//! needed to order them.

use super::store::file_text_with_lines;
use super::{Args, Failure, Offer, Session};
use lacuna::balance::Status;
use lacuna::balance::checked::check_and_balance;
use lacuna::base::diagnostic::{Code, Diagnostic};
use lacuna::base::number::Q;
use lacuna::file::reader::{Line as ReaderLine, classify};
use lacuna::generate::dope::{DopeOptions, mechanisms, parse_dopant, parse_site};
use lacuna::host::Host;
use lacuna::model::builder::ModelBuilder;
use lacuna::model::law::FactorKind;
use lacuna::model::laws::document_laws;
use lacuna::model::thermo::temperature_text;
use lacuna::model::{Document, Overrides};
use lacuna::notation::{Span, Style, parse_reaction, render_reaction};
use lacuna::report::balance::write_outcome;
use lacuna::report::dope::{TableInput, write_report};
use lacuna::report::human::write_diagnostic;
use lacuna::report::law::write_law_text;
use lacuna::report::regimes::{Along, regimes_table};
use lacuna::solve::regimes::{self, Sweep};
use std::io::Write;

/// A diagnostic of an argument's own text (located on line 1 of it) moved
/// to the argument's place in the command line.
fn at_word(d: Diagnostic, word: &Span) -> Diagnostic {
    let mut d = d;
    d.span = word.start + d.span.start..word.start + d.span.end;
    d.line = 0;
    d.column = 0;
    d
}

/// `/balance WHICH [--free]`
pub(super) fn balance(
    session: &mut Session,
    args: &Args<'_>,
    out: &mut dyn Write,
) -> Result<(), Failure> {
    let free = args.words.iter().any(|(w, _)| *w == "--free");
    let which: Vec<(&str, Span)> = args
        .words
        .iter()
        .filter(|(w, _)| *w != "--free")
        .cloned()
        .collect();
    let [(word, span)] = which.as_slice() else {
        return Err(args
            .usage_error(None, "`/balance` takes one reaction")
            .with_help("e.g. `/balance 2` or `/balance red`; `--free` treats the coefficients you wrote as unknown too")
            .into());
    };
    if *word == "all" {
        return Err(args
            .usage_error(
                Some(span.clone()),
                "`/balance` balances one reaction at a time",
            )
            .with_help("name it by number or label, e.g. `/balance 2`")
            .into());
    }
    let index = session
        .select(args, std::slice::from_ref(&(*word, span.clone())))?
        .first()
        .copied()
        .ok_or_else(|| args.usage_error(Some(span.clone()), "no reaction to balance"))?;
    let Some((line, _)) = session.recheck(index) else {
        return Err(args
            .usage_error(Some(span.clone()), "no reaction to balance")
            .into());
    };
    let entry = &session.entries[index];
    let start = entry.label.as_ref().map_or(0, |l| l.len() + 2);
    let (parsed, found) = parse_reaction(&line, start..start + entry.text.len());
    let Some(reaction) = parsed else {
        return Err(args
            .usage_error(
                Some(span.clone()),
                format!("{} does not read as a reaction", session.entry_tag(index)),
            )
            .with_help("`/check` shows why; type it again corrected")
            .into());
    };
    let host = entry.host.as_ref().map(|h| &h.host);
    let (outcome, diagnostics) = check_and_balance(
        &reaction,
        host,
        !free,
        found,
        "set one with `/host ZrO2` to balance the site ratio too",
    );
    let p = session.palette;
    let mut printed = write_outcome(out, p, &outcome, Style::Unicode, false)?;
    let source = format!("reaction {}", index + 1);
    for d in &diagnostics {
        if printed {
            writeln!(out)?;
        }
        write_diagnostic(out, p, &source, &line, &d.clone().locate(1, &line))?;
        printed = true;
    }
    session.offer = None;
    match outcome.status {
        Status::Unique => {
            let Some(b) = outcome.reactions.first() else {
                return Ok(());
            };
            if b.terms.iter().any(|t| t.coefficient == Q::from_integer(0)) {
                writeln!(
                    out,
                    "  not offered for `/take`: a species you wrote takes no part"
                )?;
                return Ok(());
            }
            // Fractions written stay fractions, as the offer after a failing reaction does.
            let fractions = reaction.terms().any(|(_, t)| !t.coefficient.is_integer());
            let balanced = if fractions {
                b.conventional.clone()
            } else {
                b.reaction.clone()
            };
            let tag = session.entry_tag(index);
            if render_reaction(&balanced, Style::Unicode)
                == render_reaction(&reaction, Style::Unicode)
            {
                writeln!(out, "  {tag} is balanced as written")?;
            } else {
                writeln!(out, "  {} keeps it in place of {tag}", p.strong("/take"))?;
                session.offer = Some(Offer {
                    entry: index,
                    reaction: balanced,
                });
            }
        }
        Status::Several => {}
        Status::None => session.problems += 1,
        // A status this build does not know offers nothing.
        _ => {}
    }
    Ok(())
}

/// `/dope OXIDE [SITE]`
pub(super) fn dope(
    session: &mut Session,
    args: &Args<'_>,
    out: &mut dyn Write,
) -> Result<(), Failure> {
    let Some(slot) = session.host.clone() else {
        return Err(args
            .usage_error(
                None,
                "no host yet: `/dope` proposes reactions for the session's host",
            )
            .with_help("set one with `/host ZrO2`, then e.g. `/dope Y2O3`")
            .into());
    };
    let host = &slot.host;
    let (oxide, oxide_span, site) = match args.words.as_slice() {
        [(oxide, span)] => (*oxide, span.clone(), None),
        [(oxide, span), site] => (*oxide, span.clone(), Some(site.clone())),
        _ => {
            return Err(args
                .usage_error(None, "`/dope` takes a dopant and optionally a site")
                .with_help("e.g. `/dope Y2O3`, `/dope Nb2O5 Ti` or `/dope Li+ i`")
                .into());
        }
    };
    let dopant = parse_dopant(oxide, host).map_err(|d| at_word(*d, &oxide_span))?;
    let mut options = DopeOptions::default();
    if let Some((text, span)) = &site {
        options.site = Some(parse_site(text, host).map_err(|d| at_word(*d, span))?);
    }
    // A host the proposer cannot use is no fault of the words typed: point at the command.
    let report = mechanisms(host, &dopant, &options).map_err(|d| {
        let mut d = *d;
        d.span = args.command.clone();
        d.line = 0;
        d
    })?;
    write_report(
        out,
        session.palette,
        &TableInput {
            host,
            dopant: &dopant,
            report: &report,
            style: Style::Unicode,
            integers: false,
        },
        &|name| {
            format!(
                "`lacuna dope {} {oxide} --cn {name}=N` overrides it",
                slot.spec
            )
        },
    )?;
    if report.mechanisms.is_empty() {
        return Err(Diagnostic::new(
            Code::CannotBalance,
            oxide_span,
            format!(
                "no incorporation mechanism of {} in {} balances{}",
                dopant.ion(),
                host.formula_text,
                if site.is_some() { " on that site" } else { "" }
            ),
        )
        .with_help("try another site, or check the host's formal charges")
        .into());
    }
    writeln!(
        out,
        "To keep one, type or paste its reaction; it is checked and numbered like any other."
    )?;
    Ok(())
}

/// Prints a diagnostic of the session document: on an entry's line it is
/// shown as that reaction's, elsewhere (model lines kept from a loaded file)
/// as the session's line as `/save` would write it.
fn print_session_diagnostic(
    session: &Session,
    out: &mut dyn Write,
    doc: &Document,
    lines: &[u32],
    d: &Diagnostic,
) -> std::io::Result<()> {
    let text = doc.line_text(d.line);
    match lines.iter().position(|&l| l == d.line && l > 0) {
        Some(i) => {
            let d = d.clone().locate(1, text);
            write_diagnostic(
                out,
                session.palette,
                &format!("reaction {}", i + 1),
                text,
                &d,
            )
        }
        None => write_diagnostic(
            out,
            session.palette,
            "session (as `/save` writes it)",
            text,
            d,
        ),
    }
}

/// `/law [WHICH...|all]`
pub(super) fn law(
    session: &mut Session,
    args: &Args<'_>,
    out: &mut dyn Write,
) -> Result<(), Failure> {
    let chosen = session.select(args, &args.words)?;
    if chosen.is_empty() {
        writeln!(out, "no reactions yet")?;
        return Ok(());
    }
    // Every reaction with its own host, and the kept model lines (the data).
    align_spans(session, 0..session.entries.len());
    let every = |_: usize| true;
    let (builder, lines, _) = session_builder(session, ModelBuilder::hostless(), &every, true);
    let doc = builder.document();
    let laws = document_laws(doc);
    let mut refused = 0;
    for i in chosen {
        let line = lines.get(i).copied().unwrap_or(0);
        let place = format!("reaction {}", i + 1);
        let Some(r) = laws.reactions.iter().find(|r| r.line == line) else {
            continue;
        };
        let text = doc.line_text(line);
        let entry = match &r.law {
            Ok(entry) => entry,
            Err(d) => {
                refused += 1;
                let mut d = d.clone().locate(1, text);
                if d.code == Code::NoLaw {
                    // The workbench's way forward: its own commands.
                    let no_host = doc
                        .reactions
                        .iter()
                        .find(|x| x.line == line)
                        .is_some_and(|x| x.host.is_none());
                    d.help = Some(if no_host {
                        "set the host with `/host ZrO2`: without it the sites and charges cannot be checked"
                    } else {
                        "`/check` shows the problems; the law of an unbalanced reaction would be wrong"
                    }.to_string());
                }
                write_diagnostic(out, session.palette, &place, text, &d)?;
                continue;
            }
        };
        for d in &r.data_problems {
            print_session_diagnostic(session, out, doc, &lines, d)?;
        }
        write_law_text(
            out,
            &entry.law,
            entry.thermo.as_ref(),
            laws.temperature,
            entry.host.as_deref(),
            &place,
            Style::Unicode,
        )?;
    }
    if refused > 0 {
        session.problems += 1;
    }
    Ok(())
}

/// `/brouwer [WHICH...|all]`
pub(super) fn brouwer(
    session: &mut Session,
    args: &Args<'_>,
    out: &mut dyn Write,
) -> Result<(), Failure> {
    if session.entries.is_empty() {
        return Err(args
            .usage_error(None, "the session has no reactions to build a model from")
            .with_help("type the defect reactions, e.g. `red: O_O -> V_O.. + 2e' + 1/2 O2(g)` and `gap: nil -> e' + h.`, or `/load` a model file")
            .into());
    }
    let chosen = session.select(args, &args.words)?;
    let host = one_host(session, args, &chosen)?;
    align_spans(session, chosen.iter().copied());
    let keep = |i: usize| chosen.contains(&i);
    let (builder, lines, unreadable) =
        session_builder(session, ModelBuilder::new(host.clone()), &keep, false);
    let overrides = Overrides::for_slopes(builder.document());
    let doc = builder.document().clone();
    let model = match builder.overrides(overrides).build() {
        Ok(m) => m,
        Err(diagnostics) => {
            for d in &diagnostics {
                print_session_diagnostic(session, out, &doc, &lines, d)?;
            }
            writeln!(out, "no model: nothing was solved")?;
            session.problems += 1;
            return Ok(());
        }
    };
    let tags: Vec<String> = chosen.iter().map(|&i| session.entry_tag(i)).collect();
    // Ordered along pO2 when K is known at a temperature; else why not.
    let ordered = if overrides.slopes_only {
        Err("the session has no K values (no `K`, `dH` or `dS` lines)".to_string())
    } else {
        model
            .require_temperature()
            .and_then(|t| model.ln_k(t).map(|_| t))
            .map_err(|d| format!("{} ({})", d.message, d.help.unwrap_or_default()))
    };
    let when = match &ordered {
        Ok(t) => format!(" at {}", temperature_text(*t)),
        Err(_) => String::new(),
    };
    writeln!(
        out,
        "model       {} on host {}{when}",
        tags.join(" "),
        host.formula_text
    )?;
    writeln!(out, "neutrality  {}", model.neutrality(Style::Unicode))?;
    for t in &model.totals {
        writeln!(out, "fixed       {}: {}", t.subject_unicode, t.description)?;
    }
    // The temperature and K were checked above: what is left is the exact
    // range of the slopes, a problem of the whole model.
    let located = |d: Diagnostic| {
        let mut d = d;
        d.span = args.command.clone();
        d.line = 0;
        Failure::User(vec![d])
    };
    match ordered {
        Ok(t) => {
            let regimes = regimes::regimes(&model, Sweep::Po2 { temperature: t }, model.po2_range)
                .map_err(located)?;
            write!(out, "{}", regimes_table(&model, &regimes, Along::Po2))?;
        }
        Err(why) => {
            // Not known without K: the unordered table shows no range.
            let regimes = regimes::unordered_regimes(&model).map_err(located)?;
            if regimes.is_empty() {
                writeln!(
                    out,
                    "\nno regime can be solved: the reactions do not fix every concentration"
                )?;
                session.problems += 1;
                return Ok(());
            }
            write!(out, "{}", regimes_table(&model, &regimes, Along::Unordered))?;
            writeln!(
                out,
                "note: {why}: these are the exact slopes of every regime the reactions allow; K values are needed to order the regimes along pO₂ and to tell which of them occur"
            )?;
            writeln!(
                out,
                "note: load a model file with `K`, `dH`/`dS` and `temperature` lines (grammar/model.md), or run `lacuna brouwer` on one"
            )?;
        }
    }
    if model.oxygen().is_none() {
        writeln!(
            out,
            "note: no reaction exchanges O2(g), so no concentration depends on pO₂ and every slope is 0"
        )?;
    }
    if overrides.slopes_only {
        // Every reaction became an equilibrium: one with a pure phase pins
        // the dopant at its solubility limit, which is easy to miss.
        let with_phase = |i: usize| {
            model.equilibria.iter().any(|e| {
                Some(&e.line) == lines.get(i)
                    && e.law.factors.iter().any(|f| f.kind == FactorKind::Phase)
            })
        };
        let others: Vec<String> = chosen
            .iter()
            .filter(|&&i| !with_phase(i))
            .map(|i| (i + 1).to_string())
            .collect();
        for e in &model.equilibria {
            let phases: Vec<&str> = e
                .law
                .factors
                .iter()
                .filter(|f| f.kind == FactorKind::Phase)
                .map(|f| f.species.as_str())
                .collect();
            if phases.is_empty() {
                continue;
            }
            writeln!(
                out,
                "note: `{}` is taken as an equilibrium with pure {}: the dopant at its solubility limit, not at a fixed level; to fix the level, load a model with a `fix` line, or leave the reaction out{}",
                e.label,
                phases.join(", "),
                if others.is_empty() || others.len() == chosen.len() {
                    String::new()
                } else {
                    format!(" (`/brouwer {}`)", others.join(" "))
                }
            )?;
        }
    }
    if unreadable > 0 {
        writeln!(
            out,
            "note: left out {unreadable} line{} of a loaded file that did not read as a reaction",
            if unreadable == 1 { "" } else { "s" }
        )?;
    }
    if !model.reference_only.is_empty() {
        writeln!(
            out,
            "note: shown for reference only (no data): {}",
            model.reference_only.join(", ")
        )?;
    }
    Ok(())
}

/// The one host of the chosen reactions, or an error saying what to do.
fn one_host(session: &Session, args: &Args<'_>, chosen: &[usize]) -> Result<Host, Failure> {
    let mut host: Option<(usize, &Host)> = None;
    for &i in chosen {
        let Some(slot) = session.entries[i].host.as_ref() else {
            return Err(args
                .usage_error(
                    None,
                    format!(
                        "{} has no host, and a model needs one",
                        session.entry_tag(i)
                    ),
                )
                .with_help(
                    "set one with `/host ZrO2`; the reactions typed so far are checked again then",
                )
                .into());
        };
        match host {
            None => host = Some((i, &slot.host)),
            Some((first, h)) if *h != slot.host => {
                return Err(args
                    .usage_error(
                        None,
                        format!(
                            "{} is in {} but {} in {}: a model has one host",
                            session.entry_tag(first),
                            h.formula_text,
                            session.entry_tag(i),
                            slot.host.formula_text
                        ),
                    )
                    .with_help(format!(
                        "name the reactions of one host, e.g. `/brouwer {}` (`/list` shows them by host)",
                        same_host(session, chosen, h)
                    ))
                    .into());
            }
            Some(_) => {}
        }
    }
    host.map(|(_, h)| h.clone()).ok_or_else(|| {
        args.usage_error(None, "no reactions chosen")
            .with_help("`/list` shows them")
            .into()
    })
}

/// The numbers of the chosen entries on `host`, for a suggestion.
fn same_host(session: &Session, chosen: &[usize], host: &Host) -> String {
    chosen
        .iter()
        .filter(|&&i| {
            session.entries[i]
                .host
                .as_ref()
                .is_some_and(|s| s.host == *host)
        })
        .map(|i| (i + 1).to_string())
        .collect::<Vec<_>>()
        .join(" ")
}

/// Checks the entries again from their own lines (as `/balance` does), so
/// that their reactions' spans point into the line `/save` writes; a
/// reaction loaded from a file points into the file's line, which may be
/// spaced differently.
fn align_spans(session: &mut Session, entries: impl Iterator<Item = usize>) {
    for i in entries {
        session.recheck(i);
    }
}

/// The reactions of the session that `keep` accepts, with the model lines
/// kept from loaded files, added to `builder`: the reactions go in as they
/// are held, nothing is written out and read back. With `own_hosts` each
/// reaction is checked against its own host, else against the builder's.
/// Items are numbered as `/save` would write the session, so that a
/// diagnostic names the line the saved file would have. Also returns the
/// line of each entry and the number of lines of loaded files left out
/// because they did not read as reactions (they are no reactions of the
/// session). The data lines of reactions not kept are left out with them.
fn session_builder(
    session: &Session,
    mut builder: ModelBuilder,
    keep: &dyn Fn(usize) -> bool,
    own_hosts: bool,
) -> (ModelBuilder, Vec<u32>, usize) {
    // The numbering only: the text itself is not read.
    let (_, lines) = file_text_with_lines(session);
    builder = builder.source("session");
    let mut unreadable = 0;
    let mut dropped_labels = Vec::new();
    let take =
        |builder: ModelBuilder, at: u32, text: &str, unreadable: &mut usize| match classify(text) {
            ReaderLine::Model { .. } => builder.skip_to_line(at).model_line(text),
            ReaderLine::Reaction { .. } => {
                *unreadable += 1;
                builder
            }
            _ => builder,
        };
    let mut block = 1u32;
    for (i, entry) in session.entries.iter().enumerate() {
        for (j, text) in entry.preamble.iter().enumerate() {
            let at = block.saturating_add(u32::try_from(j).unwrap_or(u32::MAX));
            builder = take(builder, at, text, &mut unreadable);
        }
        let at = lines.get(i).copied().unwrap_or(0);
        if keep(i) {
            if own_hosts {
                builder = builder.host(entry.host.as_ref().map(|slot| slot.host.clone()));
            }
            builder = builder.skip_to_line(at).parsed_reaction(
                entry.label.as_deref(),
                entry.reaction.clone(),
                &entry.file_line(),
            );
        } else if let Some(label) = &entry.label {
            dropped_labels.push(label.clone());
        }
        block = at.saturating_add(1);
    }
    for (j, text) in session.trailer.iter().enumerate() {
        let at = block.saturating_add(u32::try_from(j).unwrap_or(u32::MAX));
        builder = take(builder, at, text, &mut unreadable);
    }
    (builder.without_data_of(&dropped_labels), lines, unreadable)
}
