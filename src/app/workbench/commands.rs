//! The workbench's commands: the table and one handler per command.
//!
//! To add a command, write a handler `fn(&mut Session, &Args, &mut dyn Write)
//! -> Result<(), Failure>` and add one `CommandSpec` to `COMMANDS`; help,
//! completion and hints pick it up from the table.

use super::{ArgKind, Args, CommandSpec, Failure, HostSlot, SIGIL, Session, style_of};
use lacuna::base::text;
use lacuna::host::Host;
use lacuna::notation::{Entity, Style, render_reaction, render_term};
use lacuna::typeset::{self, Form};
use std::collections::BTreeMap;
use std::io::Write;

/// Every command, in the order `/help` lists them.
pub static COMMANDS: &[CommandSpec] = &[
    CommandSpec {
        name: "help",
        aliases: &["?"],
        summary: "list the commands, or explain one",
        usage: "[COMMAND]",
        details: "Without a name, lists every command. With one, shows its usage and what it does.",
        arguments: ArgKind::Command,
        run: help,
    },
    CommandSpec {
        name: "host",
        aliases: &[],
        summary: "show the host, or set it for the reactions that follow",
        usage: "[SPEC]",
        details: "SPEC is a formula (`ZrO2`, `BaTiO3`) or a formula with explicit sites\n(`Fe3O4 sites Fe:A +3 x1, Fe:B +5/2 x2, O -2`). Reactions typed before any\nhost was set are checked again against the new one; reactions entered\nunder another host keep theirs. A `host SPEC` line does the same.",
        arguments: ArgKind::Host,
        run: host,
    },
    CommandSpec {
        name: "list",
        aliases: &["ls"],
        summary: "list the session's reactions with their numbers, labels and verdicts",
        usage: "",
        details: "Each reaction is shown as `[number label] verdict reaction`, grouped by host.",
        arguments: ArgKind::None,
        run: list,
    },
    CommandSpec {
        name: "name",
        aliases: &["label"],
        summary: "give a reaction a label (or `-` to remove it)",
        usage: "WHICH LABEL",
        details: "WHICH is a number from `/list` or a label. A label starts with a letter\nand holds letters, digits, `-` and `.`; it is how a reaction file names\nthe reaction (`label: reaction`). Typing `label: reaction` names it at once.",
        arguments: ArgKind::Entries,
        run: name,
    },
    CommandSpec {
        name: "drop",
        aliases: &["rm"],
        summary: "remove reactions from the session",
        usage: "WHICH...",
        details: "Removes the reactions named by number or label. The numbers of later reactions move up.",
        arguments: ArgKind::Entries,
        run: drop,
    },
    CommandSpec {
        name: "check",
        aliases: &[],
        summary: "check reactions again and show every problem in full",
        usage: "[WHICH...|all]",
        details: "Checks the named reactions (all by default) against their hosts and\nprints the diagnostics and balance tables, as `lacuna check` does.",
        arguments: ArgKind::Entries,
        run: check,
    },
    CommandSpec {
        name: "species",
        aliases: &["sp"],
        summary: "list the species the session's reactions use",
        usage: "",
        details: "Each species, associate and compound once, with the reactions it appears in.",
        arguments: ArgKind::None,
        run: species,
    },
    CommandSpec {
        name: "typeset",
        aliases: &["ts"],
        summary: "write reactions as latex, unicode, ascii, html or markdown",
        usage: "[FORM] [WHICH...|all]",
        details: "FORM is latex (the default), unicode, ascii, html or markdown. LaTeX is\nmath mode, the host over the arrow of dissolution reactions\n(`\\xrightarrow{\\mathrm{ZrO_{2}}}`), the label as a `%` comment; ascii and unicode lines are reaction-file\nlines. See grammar/repl.md for every form.",
        arguments: ArgKind::FormThenEntries,
        run: typeset_command,
    },
    CommandSpec {
        name: "save",
        aliases: &["write"],
        summary: "save the reactions to a reaction file",
        usage: "[PATH] [--replace]",
        details: "Writes `host` lines and `label: reaction` lines (the .kvr format that\n`lacuna check` reads). Without PATH, writes to the file the session was\nloaded from or last saved to. The old file stays whole until the new one is\ncomplete. A file that exists and is not the session's own, or that another\nprogram changed since, is only replaced with `--replace`.",
        arguments: ArgKind::Path,
        run: super::store::save,
    },
    CommandSpec {
        name: "load",
        aliases: &["open"],
        summary: "read the reactions of a reaction file into the session",
        usage: "PATH",
        details: "Checks every reaction of the file and adds it to the session; comments,\nmodel lines and lines that do not parse are kept and written back by\n`/save`. The host becomes the file's last `host` line.",
        arguments: ArgKind::Path,
        run: super::store::load,
    },
    CommandSpec {
        name: "take",
        aliases: &[],
        summary: "replace a reaction with the balanced form on offer",
        usage: "",
        details: "When a reaction does not balance and a balanced form exists, the\nworkbench offers it, and `/balance` offers a unique answer; `/take` keeps\nit in place of what was typed.",
        arguments: ArgKind::None,
        run: take,
    },
    CommandSpec {
        name: "balance",
        aliases: &["bal"],
        summary: "find coefficients that balance a reaction",
        usage: "WHICH [--free]",
        details: "Solves exactly for the coefficients of the named reaction, keeping those you\nwrote (`--free`: all unknown), and prints the answer as `lacuna balance`\ndoes: one balanced reaction, several independent ones, or none and why.\nA unique answer that differs from the reaction is offered: `/take` keeps it.",
        arguments: ArgKind::Entries,
        run: super::chemistry::balance,
    },
    CommandSpec {
        name: "dope",
        aliases: &[],
        summary: "rank the ways a dopant enters the host",
        usage: "OXIDE [SITE]",
        details: "Proposes every balanced incorporation reaction of a dopant (its oxide,\n`Y2O3`, or ion, `Y3+`) in the session's host, ranked by size and charge\nmatch, as `lacuna dope` prints them. SITE is a cation site (`Ti`, `Fe:A`)\nor `i` for an interstitial. Type a reaction from the table to keep it.",
        arguments: ArgKind::None,
        run: super::chemistry::dope,
    },
    CommandSpec {
        name: "law",
        aliases: &[],
        summary: "write the mass-action law of reactions",
        usage: "[WHICH...|all]",
        details: "The equilibrium constant expression of the named reactions (all by\ndefault), with K(T) when a loaded file gives its data, the units of K and\nthe assumptions, as `lacuna law` prints them. A reaction that fails its\nchecks gets no law.",
        arguments: ArgKind::Entries,
        run: super::chemistry::law,
    },
    CommandSpec {
        name: "brouwer",
        aliases: &[],
        summary: "exact Brouwer regimes and slopes of the session's reactions",
        usage: "[WHICH...|all]",
        details: "Reads the session (the named reactions, all by default, with the model\nlines of loaded files) as a defect model and prints its exact regimes as\n`lacuna brouwer` does: slopes d log[X] / d log pO2 per regime, ordered\nalong pO2 when K values and a temperature are given. Without them it\nprints every regime the reactions allow, unordered, and says so.",
        arguments: ArgKind::Entries,
        run: super::chemistry::brouwer,
    },
    CommandSpec {
        name: "quit",
        aliases: &["q", "exit"],
        summary: "leave the workbench (so does Ctrl-D)",
        usage: "",
        details: "Leaves. Unsaved reactions are lost: `/save` first.",
        arguments: ArgKind::None,
        run: quit,
    },
];

fn help(session: &mut Session, args: &Args<'_>, out: &mut dyn Write) -> Result<(), Failure> {
    let p = session.palette;
    if let Some((word, span)) = args.words.first() {
        let word = word.trim_start_matches(SIGIL);
        let Some(spec) = super::find_command(word) else {
            return Err(args
                .usage_error(Some(span.clone()), format!("no command `{word}`"))
                .with_help("`/help` lists the commands")
                .into());
        };
        writeln!(out, "{}{} {}", SIGIL, p.strong(spec.name), spec.usage)?;
        writeln!(out, "  {}", spec.summary)?;
        for line in spec.details.lines() {
            writeln!(out, "  {line}")?;
        }
        if !spec.aliases.is_empty() {
            let aliases: Vec<String> = spec.aliases.iter().map(|a| format!("{SIGIL}{a}")).collect();
            writeln!(out, "  also: {}", aliases.join(", "))?;
        }
        return Ok(());
    }
    writeln!(
        out,
        "Type a reaction to check it against the host, e.g. `O_O -> V_O.. + 2e' + 1/2 O2(g)`."
    )?;
    writeln!(
        out,
        "`label: reaction` names it; LaTeX pasted from a manuscript is read too."
    )?;
    writeln!(
        out,
        "A line ending in `+` or an arrow continues on the next; Alt-Enter starts a new line of a block."
    )?;
    writeln!(out, "Commands:")?;
    for spec in COMMANDS {
        let head = format!("{SIGIL}{} {}", spec.name, spec.usage);
        writeln!(out, "  {:<32} {}", head.trim_end(), spec.summary)?;
    }
    writeln!(
        out,
        "WHICH is a reaction number or label. `/help COMMAND` says more. Ctrl-C abandons a line, Ctrl-D leaves."
    )?;
    Ok(())
}

fn host(session: &mut Session, args: &Args<'_>, out: &mut dyn Write) -> Result<(), Failure> {
    if args.rest.is_empty() {
        match &session.host {
            Some(slot) => writeln!(out, "{}", slot.host.describe())?,
            None => writeln!(
                out,
                "no host yet: set one with `/host ZrO2` (or a formula with sites, see `/help host`)"
            )?,
        }
        return Ok(());
    }
    let host = Host::parse(args.line, args.rest.clone()).map_err(Failure::User)?;
    let slot = HostSlot::new(args.rest_text(), host);
    writeln!(out, "{}", slot.host.describe())?;
    let orphans: Vec<usize> = (0..session.entries.len())
        .filter(|&i| session.entries[i].host.is_none())
        .collect();
    session.host = Some(slot.clone());
    if orphans.is_empty() {
        return Ok(());
    }
    let mut passing = 0;
    for &i in &orphans {
        session.entries[i].host = Some(slot.clone());
        if session.recheck(i).is_some() && session.entries[i].ok {
            passing += 1;
        }
    }
    let n = orphans.len();
    writeln!(
        out,
        "checked {n} earlier reaction{} against it: {passing} pass{}",
        if n == 1 { "" } else { "s" },
        if passing < n {
            format!(", {} fail (`/check` shows why)", n - passing)
        } else {
            String::new()
        }
    )?;
    Ok(())
}

fn list(session: &mut Session, _args: &Args<'_>, out: &mut dyn Write) -> Result<(), Failure> {
    if session.entries.is_empty() {
        writeln!(out, "no reactions yet: type one, or `/load FILE`")?;
        return Ok(());
    }
    let p = session.palette;
    let mut last_host: Option<Option<String>> = None;
    for (i, entry) in session.entries.iter().enumerate() {
        let host = entry.host.as_ref().map(|h| h.spec.clone());
        if last_host.as_ref() != Some(&host) {
            match &host {
                Some(spec) => writeln!(out, "{}", p.frame(&format!("host {spec}")))?,
                None => writeln!(out, "{}", p.frame("(no host)"))?,
            }
            last_host = Some(host);
        }
        let mark = if entry.ok {
            p.good("✓")
        } else {
            p.bad("✗")
        };
        writeln!(
            out,
            "{} {mark} {}",
            p.strong(&session.entry_tag(i)),
            render_reaction(&entry.reaction, Style::Unicode)
        )?;
    }
    Ok(())
}

/// `label = letter { letter | digit | "-" | "." }`: what a reaction file reads back.
fn valid_label(label: &str) -> bool {
    label
        .chars()
        .next()
        .is_some_and(|c| c.is_ascii_alphabetic())
        && label
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || matches!(c, '-' | '.'))
}

fn name(session: &mut Session, args: &Args<'_>, out: &mut dyn Write) -> Result<(), Failure> {
    let [which, (label, label_span)] = args.words.as_slice() else {
        return Err(args
            .usage_error(None, "`/name` takes a reaction and a label")
            .with_help("e.g. `/name 2 red` (or `/name red -` to remove the label)")
            .into());
    };
    if which.0 == "all" {
        return Err(args
            .usage_error(Some(which.1.clone()), "a label names one reaction, not all")
            .with_help("e.g. `/name 2 red`")
            .into());
    }
    let Some(&index) = session.select(args, std::slice::from_ref(which))?.first() else {
        return Err(args
            .usage_error(Some(which.1.clone()), "no reaction to name")
            .with_help("type a reaction first")
            .into());
    };
    if *label == "-" {
        session.entries[index].label = None;
        writeln!(out, "{} has no label now", session.entry_tag(index))?;
        return Ok(());
    }
    if !valid_label(label) {
        return Err(args
            .usage_error(
                Some(label_span.clone()),
                format!("`{label}` cannot be a label"),
            )
            .with_help("a label starts with a letter and holds letters, digits, `-` and `.`")
            .into());
    }
    if let Some(other) = session.label_index(label).filter(|&o| o != index) {
        return Err(args
            .usage_error(
                Some(label_span.clone()),
                format!("`{label}` already names {}", session.entry_tag(other)),
            )
            .with_help("choose another label, or remove that one with `/name LABEL -`")
            .into());
    }
    session.entries[index].label = Some((*label).to_string());
    writeln!(out, "{} named", session.entry_tag(index))?;
    Ok(())
}

fn drop(session: &mut Session, args: &Args<'_>, out: &mut dyn Write) -> Result<(), Failure> {
    if args.words.is_empty() {
        return Err(args
            .usage_error(None, "`/drop` needs the reactions to remove")
            .with_help("e.g. `/drop 3` or `/drop red`; `/list` shows the numbers")
            .into());
    }
    let mut chosen = session.select(args, &args.words)?;
    chosen.sort_unstable_by(|a, b| b.cmp(a));
    for &i in &chosen {
        let tag = session.entry_tag(i);
        let removed = session.entries.remove(i);
        // Lines kept above it in a loaded file move to the next reaction.
        if !removed.preamble.is_empty() {
            match session.entries.get_mut(i) {
                Some(next) => {
                    let mut lines = removed.preamble;
                    lines.append(&mut next.preamble);
                    next.preamble = lines;
                }
                None => {
                    let mut lines = removed.preamble;
                    lines.append(&mut session.trailer);
                    session.trailer = lines;
                }
            }
        }
        writeln!(out, "dropped {tag}")?;
    }
    session.offer = None;
    Ok(())
}

fn check(session: &mut Session, args: &Args<'_>, out: &mut dyn Write) -> Result<(), Failure> {
    let chosen = session.select(args, &args.words)?;
    if chosen.is_empty() {
        writeln!(out, "no reactions yet")?;
        return Ok(());
    }
    let p = session.palette;
    let mut passing = 0;
    for &i in &chosen {
        let Some((line, analysis)) = session.recheck(i) else {
            continue;
        };
        if session.entries[i].ok {
            passing += 1;
        }
        writeln!(
            out,
            "{} {}  {}",
            p.strong(&session.entry_tag(i)),
            super::verdict_text(p, analysis.verdict.as_ref(), &analysis.diagnostics),
            render_reaction(&session.entries[i].reaction, Style::Unicode)
        )?;
        let source = format!("reaction {}", i + 1);
        for d in &analysis.diagnostics {
            let d = d.clone().locate(1, &line);
            lacuna::report::human::write_diagnostic(out, p, &source, &line, &d)?;
        }
        if let Some(v) = &analysis.verdict {
            let b = v.balance;
            if !b.mass || !b.charge || b.site == Some(false) {
                let host = session.entries[i].host.as_ref().map(|h| &h.host);
                lacuna::report::human::write_table(out, p, &v.table, host, b.site)?;
            }
        }
    }
    writeln!(out, "{} of {} pass", passing, chosen.len())?;
    if passing < chosen.len() {
        session.problems += 1;
    }
    Ok(())
}

fn species(session: &mut Session, _args: &Args<'_>, out: &mut dyn Write) -> Result<(), Failure> {
    let mut seen: BTreeMap<String, Vec<usize>> = BTreeMap::new();
    for (i, entry) in session.entries.iter().enumerate() {
        for (_, term) in entry.reaction.terms() {
            if term.entity == Entity::Nil {
                continue;
            }
            let mut bare = term.clone();
            bare.coefficient = lacuna::base::number::int(1);
            let text = render_term(&bare, Style::Unicode);
            let uses = seen.entry(text).or_default();
            if !uses.contains(&(i + 1)) {
                uses.push(i + 1);
            }
        }
    }
    if seen.is_empty() {
        writeln!(out, "no species yet")?;
        return Ok(());
    }
    let width = seen.keys().map(|k| text::width(k)).max().unwrap_or(0);
    for (species, uses) in &seen {
        let uses: Vec<String> = uses.iter().map(|n| format!("[{n}]")).collect();
        let pad = width.saturating_sub(text::width(species));
        writeln!(
            out,
            "  {}{}  in {}",
            session.palette.species(species),
            " ".repeat(pad),
            uses.join(" ")
        )?;
    }
    Ok(())
}

fn typeset_command(
    session: &mut Session,
    args: &Args<'_>,
    out: &mut dyn Write,
) -> Result<(), Failure> {
    let (form, which) = match args.words.first() {
        Some((word, _))
            if word.parse::<usize>().is_err()
                && session.label_index(word).is_none()
                && *word != "all" =>
        {
            match Form::from_name(word) {
                Some(form) => (form, &args.words[1..]),
                None => {
                    return Err(args
                        .usage_error(
                            Some(args.words[0].1.clone()),
                            format!("`{word}` is not a form or a reaction"),
                        )
                        .with_help("forms: latex, unicode, ascii, html, markdown")
                        .into());
                }
            }
        }
        _ => (Form::Latex, &args.words[..]),
    };
    let chosen = session.select(args, which)?;
    if chosen.is_empty() {
        writeln!(out, "no reactions yet")?;
        return Ok(());
    }
    for i in chosen {
        let entry = &session.entries[i];
        let host = entry.host.as_ref().map(|h| &h.host);
        let over = typeset::host_over_arrow(&entry.reaction, host, typeset::ArrowHost::Auto);
        let body = typeset::reaction(&entry.reaction, form, over);
        writeln!(
            out,
            "{}",
            typeset::line(entry.label.as_deref(), &body, form)
        )?;
    }
    Ok(())
}

fn take(session: &mut Session, args: &Args<'_>, out: &mut dyn Write) -> Result<(), Failure> {
    let Some(offer) = session.offer.take() else {
        return Err(args
            .usage_error(None, "no balanced form is on offer")
            .with_help("a balanced form is offered right after a reaction that does not balance")
            .into());
    };
    let Some(entry) = session.entries.get_mut(offer.entry) else {
        return Err(args
            .usage_error(None, "the reaction on offer was dropped")
            .into());
    };
    entry.text = render_reaction(&offer.reaction, style_of(&entry.reaction));
    entry.reaction = offer.reaction;
    let index = offer.entry;
    if let Some((_, analysis)) = session.recheck(index) {
        session.write_verdict(out, index, &analysis, true)?;
    }
    Ok(())
}

fn quit(session: &mut Session, _args: &Args<'_>, _out: &mut dyn Write) -> Result<(), Failure> {
    session.quit = true;
    Ok(())
}
