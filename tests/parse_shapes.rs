//! The shapes real solvers write, generated here from their documented layouts
//! and read through `parse::Reader`: a solver log with a banner, an echoed input
//! deck, a table, run statistics and a second run; a recorder wrapped in XML; a
//! logger header with units and a banner over several columns; headerless
//! recorder files; byte-order marks; names with terminal escapes; a declared
//! scheme. Each is also read in small pieces, as a growing file arrives.

use rhoscope::parse::roles::{EnergyTerm, Role, RoleRules, assign};
use rhoscope::parse::{NamesFrom, ParseOptions, Reader, SegmentReason, SkipReason};

use super::parse_formats::{Events, read};

/// Read `bytes` cut into pieces of `piece` bytes.
fn read_cut(bytes: &[u8], piece: usize) -> Events {
    let mut r = Reader::new(&ParseOptions::default(), &RoleRules::default());
    let mut ev = Events::default();
    for c in bytes.chunks(piece) {
        r.feed(c, &mut ev);
    }
    r.finish(&mut ev);
    ev
}

/// Reading in pieces gives the same events as reading whole.
fn same_however_cut(bytes: &[u8]) -> Events {
    let whole = read(bytes);
    for piece in [1, 2, 3, 7, 64, 4096] {
        let cut = read_cut(bytes, piece);
        assert_eq!(whole.schemas, cut.schemas, "piece {piece}");
        assert_eq!(whole.segments, cut.segments, "piece {piece}");
        assert_eq!(whole.skipped, cut.skipped, "piece {piece}");
        let lines = |e: &Events| e.rows.iter().map(|r| r.0).collect::<Vec<_>>();
        assert_eq!(lines(&whole), lines(&cut), "piece {piece}");
    }
    whole
}

fn outside(ev: &Events) -> u64 {
    ev.skipped
        .iter()
        .map(|(_, r)| match r {
            SkipReason::OutsideTable { lines, .. } => *lines,
            _ => 0,
        })
        .sum()
}

fn skipped_rows(ev: &Events) -> Vec<u64> {
    ev.skipped
        .iter()
        .filter(|(_, r)| !r.is_note())
        .map(|(l, _)| *l)
        .collect()
}

/// A text file being built line by line, remembering line numbers.
#[derive(Default)]
pub struct Text {
    lines: Vec<String>,
}

impl Text {
    pub fn push(&mut self, line: impl Into<String>) -> u64 {
        self.lines.push(line.into());
        self.lines.len() as u64
    }
    pub fn bytes(&self) -> Vec<u8> {
        let mut s = self.lines.join("\n");
        s.push('\n');
        s.into_bytes()
    }
}

/// What the particle log generator put where.
pub struct LogFacts {
    pub text: Text,
    pub header1: u64,
    pub header2: u64,
    pub warning: u64,
    /// The line declaring the second run's step size, 0.002.
    pub step2: u64,
    pub rows: usize,
    pub outside: u64,
}

/// A thermodynamic log as particle codes print it (the layout of the thermo
/// output described for the `thermo_style` command in the LAMMPS manual):
/// echoed input commands and a setup block, a header line of keywords, a row
/// every 50 steps, run statistics; then a second run whose header prints other
/// keywords and runs at a smaller step (`timestep 0.002`). Values come from an
/// invented cooling lattice, not from a solver.
/// With `blow_up`, the second run's energies grow tenfold a row and turn NaN.
pub fn particle_log(blow_up: bool) -> LogFacts {
    let mut t = Text::default();
    let mut outside = 0;
    let mut text = |t: &mut Text, s: &str| {
        if !s.trim().is_empty() {
            outside += 1;
        }
        t.push(s)
    };
    for s in [
        "PARTICLE CODE (invented build 7)",
        "units lj",
        "atom_style atomic",
        "",
        "lattice fcc 0.8442",
        "Lattice spacing in x,y,z = 1.6796 1.6796 1.6796",
        "region box block 0 10 0 10 0 10",
        "Created 4000 atoms",
        "  1 by 1 by 1 MPI processor grid",
        "timestep 0.005",
        "thermo 50",
        "run 250",
        "Setting up Verlet run ...",
        "  Unit style    : lj",
        "  Current step  : 0",
        "  Time step     : 0.005",
        "Per MPI rank memory allocation (min/avg/max) = 3.1 | 3.1 | 3.1 Mbytes",
    ] {
        text(&mut t, s);
    }
    let header1 = t.push(
        "   Step          Temp          E_pair         E_mol          TotEng         Press     ",
    );
    let mut rows = 0;
    let mut warning = 0;
    for i in 0..6 {
        let x = f64::from(i);
        let temp = 3.0 - 1.3 * (1.0 - (-x).exp());
        let pair = -6.77 + 2.0 * (1.0 - (-x).exp());
        t.push(format!(
            "{:10} {:14.7} {:14.7} {:14} {:14.7} {:14.7}",
            i * 50,
            temp,
            pair,
            0,
            pair + 1.5 * temp,
            5.5 * x.sin()
        ));
        rows += 1;
        if i == 3 {
            warning = t.push("WARNING: Bond/angle/dihedral extent > half of periodic box length");
        }
    }
    for s in [
        "Loop time of 0.0451 on 1 procs for 250 steps with 4000 atoms",
        "",
        "Performance: 2394.9 tau/day, 5544.0 timesteps/s",
        "98.6% CPU use with 1 MPI tasks x no OpenMP threads",
        "",
        "MPI task timing breakdown:",
        "Section |  min time  |  avg time  |  max time  |%varavg| %total",
        "---------------------------------------------------------------",
        "Pair    | 0.030      | 0.030      | 0.030      |   0.0 | 66.8",
        "Total wall time: 0:00:00",
        "timestep 0.002",
        "run 100",
        "Setting up Verlet run ...",
    ] {
        text(&mut t, s);
    }
    let step2 = text(&mut t, "  Time step     : 0.002");
    let header2 = t.push("   Step          Temp          PotEng         KinEng         TotEng         Press          Volume");
    for i in 0..5 {
        let grow = if blow_up { 10f64.powi(i) } else { 1.0 };
        let ke = if blow_up && i == 4 {
            f64::NAN
        } else {
            2.4 * grow
        };
        t.push(format!(
            "{:10} {:14.7} {:14.7} {:14.7} {:14.7} {:14.7} {:14.4}",
            250 + 20 * i,
            1.6 * grow,
            -4.8,
            ke,
            -2.4 + ke,
            0.3,
            4741.8
        ));
        rows += 1;
    }
    text(
        &mut t,
        "Loop time of 0.01 on 1 procs for 100 steps with 4000 atoms",
    );
    LogFacts {
        text: t,
        header1,
        header2,
        warning,
        step2,
        rows,
        outside,
    }
}

#[test]
fn solver_log_finds_its_tables_and_keeps_text_out_of_the_counts() {
    let f = particle_log(false);
    let ev = same_however_cut(&f.text.bytes());
    assert_eq!(ev.rows.len(), f.rows);
    assert_eq!(ev.schemas.len(), 2);
    assert_eq!(ev.schemas[0].0, f.header1);
    assert_eq!(
        ev.schemas[0].1,
        ["Step", "Temp", "E_pair", "E_mol", "TotEng", "Press"]
    );
    assert_eq!(ev.full[0].names_from, NamesFrom::HeaderLine(f.header1));
    assert_eq!(
        ev.schemas[1].1,
        [
            "Step", "Temp", "PotEng", "KinEng", "TotEng", "Press", "Volume"
        ]
    );
    assert_eq!(ev.segments, [(f.header2, SegmentReason::NewHeader)]);
    // Only the warning inside the first table is a skipped row.
    assert_eq!(skipped_rows(&ev), [f.warning]);
    assert_eq!(outside(&ev), f.outside);
    // The echoed `timestep 0.005` is read as a declared step size, and the
    // second run's, declared between the two tables, is the second's.
    assert_eq!(ev.full[0].declared.step_size.map(|(_, v)| v), Some(0.005));
    assert_eq!(ev.full[1].declared.step_size, Some((f.step2, 0.002)));
    // The second table's energies get their roles: parts of the potential
    // energy give way to PotEng (issue 13, failure class 1).
    let roles = assign(&ev.full[1], &RoleRules::default());
    assert_eq!(roles.roles[0], Role::StepNumber);
    assert_eq!(roles.roles[1], Role::Probe);
    assert_eq!(roles.roles[2], Role::Energy(EnergyTerm::Internal));
    assert_eq!(roles.roles[3], Role::Energy(EnergyTerm::Kinetic));
    assert_eq!(roles.roles[4], Role::Energy(EnergyTerm::Total));
}

#[test]
fn a_few_numbers_in_a_banner_are_not_a_table() {
    let mut t = Text::default();
    t.push("model of a bar");
    t.push("1 2 3");
    t.push("materials 2");
    t.push("10 20");
    t.push("time ke ie");
    t.push("0 1 0");
    t.push("1 0.5 0.5");
    let ev = same_however_cut(&t.bytes());
    assert_eq!(ev.schemas[0].1, ["time", "ke", "ie"]);
    assert_eq!(ev.rows.len(), 2);
    assert!(skipped_rows(&ev).is_empty());
    assert_eq!(outside(&ev), 4);
}

/// A node recorder wrapped in XML, in the layout of the OpenSees `-xml`
/// recorder (`NodeRecorder::initialize`): a `TimeOutput` element, one
/// `NodeOutput` per node with one `ResponseType` per column, then `Data`
/// holding whitespace rows, then the closing markup. Written here by hand for
/// two nodes with two displacement components each.
pub fn xml_recorder(rows: usize) -> (Vec<u8>, u64) {
    let mut t = Text::default();
    t.push(r#"<?xml version="1.0" encoding="UTF-8" ?>"#);
    t.push(r#"<OpenSees xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance">"#);
    t.push("\t<TimeOutput>");
    t.push("\t\t<ResponseType>time</ResponseType>");
    t.push("\t</TimeOutput>");
    for node in [9, 12] {
        t.push(format!(
            "\t<NodeOutput nodeTag=\"{node}\" coord1=\"3\" coord2=\"0\" coord3=\"0\">"
        ));
        t.push("\t\t<ResponseType>D1</ResponseType>");
        t.push("\t\t<ResponseType>D2</ResponseType>");
        t.push("\t</NodeOutput>");
    }
    let data = t.push("\t<Data>");
    for i in 0..rows {
        let x = i as f64;
        t.push(format!(
            "{:e} {:e} {:e} {:e} {:e}",
            0.01 * (x + 1.0),
            (0.3 * x).sin() * 1e-3,
            (0.3 * x).cos() * 1e-3,
            (0.2 * x).sin() * 2e-3,
            0.0
        ));
    }
    t.push("\t</Data>");
    t.push("</OpenSees>");
    (t.bytes(), data)
}

#[test]
fn xml_recorder_names_columns_from_its_markup() {
    let (bytes, data) = xml_recorder(12);
    let ev = same_however_cut(&bytes);
    assert_eq!(
        ev.schemas[0].1,
        ["time", "node 9 D1", "node 9 D2", "node 12 D1", "node 12 D2"]
    );
    assert_eq!(
        ev.full[0].names_from,
        NamesFrom::Markup {
            first: 1,
            last: data
        }
    );
    assert_eq!(ev.rows.len(), 12);
    assert_eq!(ev.rows[0].0, data + 1);
    // Markup is neither a skipped row nor text outside a table.
    assert!(ev.skipped.is_empty(), "{:?}", ev.skipped);
    let roles = assign(&ev.full[0], &RoleRules::default());
    assert_eq!(roles.roles[0], Role::Time);
    assert_eq!(roles.roles[1], Role::Probe);
}

#[test]
fn xml_recorder_is_read_as_it_grows() {
    let (bytes, data) = xml_recorder(20);
    let text = String::from_utf8(bytes).unwrap_or_default();
    // Cut in the middle of a tag, then in the middle of the rows.
    let in_tag = text.find("<ResponseType>D2").unwrap_or(0) + 5;
    let mut r = Reader::new(&ParseOptions::default(), &RoleRules::default());
    let mut ev = Events::default();
    r.feed(&text.as_bytes()[..in_tag], &mut ev);
    assert!(ev.schemas.is_empty() && ev.rows.is_empty());
    let mid_rows = text
        .match_indices('\n')
        .nth(data as usize + 6)
        .map_or(0, |(i, _)| i + 3);
    r.feed(&text.as_bytes()[in_tag..mid_rows], &mut ev);
    assert_eq!(ev.schemas.len(), 1);
    assert_eq!(ev.rows.len(), 7, "rows are read as they come");
    r.feed(&text.as_bytes()[mid_rows..], &mut ev);
    r.finish(&mut ev);
    assert_eq!(ev.rows.len(), 20);
    assert!(ev.skipped.is_empty());
}

/// The header a molecular-dynamics logger writes (the `MDLogger` of the Atomic
/// Simulation Environment, as documented for `ase.md`): time in ps, three
/// energies in eV, the temperature in K, and six stress components under one
/// banner.
#[test]
fn header_units_and_a_banner_over_columns() {
    let mut t = Text::default();
    t.push(format!(
        "{:<9} {:>12} {:>12} {:>12}  {:>6}      ---------------------- stress [GPa] -----------------------",
        "Time[ps]", "Etot[eV]", "Epot[eV]", "Ekin[eV]", "T[K]"
    ));
    for i in 0..5 {
        let x = f64::from(i);
        let mut row = format!(
            "{:<10.4} {:12.4} {:12.4} {:12.4}  {:6.1}",
            0.01 * x,
            -9.5,
            -10.0 - 0.1 * x.sin(),
            0.5 + 0.1 * x.sin(),
            300.0
        );
        for j in 0..6 {
            row.push_str(&format!(" {:10.3}", 0.1 * f64::from(j) * x.cos()));
        }
        t.push(row);
    }
    let ev = same_however_cut(&t.bytes());
    let s = &ev.full[0];
    let names: Vec<_> = s.columns.iter().map(|c| c.name.as_str()).collect();
    assert_eq!(
        names,
        [
            "Time", "Etot", "Epot", "Ekin", "T", "c6", "c7", "c8", "c9", "c10", "c11"
        ]
    );
    assert_eq!(s.columns[0].unit.as_deref(), Some("ps"));
    assert_eq!(s.columns[10].unit.as_deref(), Some("GPa"));
    assert!(s.notes[0].contains("stress [GPa]"), "{:?}", s.notes);
    let roles = assign(s, &RoleRules::default());
    assert_eq!(roles.roles[0], Role::Time);
    assert_eq!(roles.roles[1], Role::Energy(EnergyTerm::Total));
    assert_eq!(roles.roles[2], Role::Energy(EnergyTerm::Internal));
    assert_eq!(roles.roles[3], Role::Energy(EnergyTerm::Kinetic));
    assert_eq!(roles.roles[4], Role::Probe, "T[K] is a temperature");
    assert!(ev.skipped.is_empty());
}

#[test]
fn unit_spellings_in_headers() {
    let ev = read(b"Time[s]  KE (J)  u/mm\n0 1 2\n1 2 3\n");
    let s = &ev.full[0];
    let pairs: Vec<_> = s
        .columns
        .iter()
        .map(|c| (c.name.as_str(), c.unit.as_deref()))
        .collect();
    assert_eq!(
        pairs,
        [("Time", Some("s")), ("KE", Some("J")), ("u", Some("mm"))]
    );
}

/// A headerless recorder: step counter, time, two probes; output every third
/// step of Δt = 1e-3.
pub fn headerless(rows: usize, stride: u32, with_step: bool) -> Vec<u8> {
    let mut t = Text::default();
    for i in 0..rows {
        let step = stride * i as u32;
        let time = f64::from(step) * 1e-3;
        let probe = format!("{:.6e} {:.6e}", (40.0 * time).sin(), (40.0 * time).cos());
        t.push(if with_step {
            format!("{step} {time:.6e} {probe}")
        } else {
            format!("{time:.6e} {probe}")
        });
    }
    t.bytes()
}

#[test]
fn headerless_file_gets_time_step_and_stride_inferred() {
    let ev = same_however_cut(&headerless(30, 3, true));
    assert_eq!(ev.rows.len(), 30);
    assert_eq!(ev.rows[0].0, 1, "the held rows are not lost");
    let s = &ev.full[0];
    assert_eq!(s.names_from, NamesFrom::Generic);
    let roles = assign(s, &RoleRules::default());
    assert_eq!(roles.roles[0], Role::StepNumber);
    assert_eq!(roles.roles[1], Role::Time);
    assert!(
        roles.reasons[1].starts_with("inferred"),
        "{}",
        roles.reasons[1]
    );
    assert!(s.notes.iter().any(|n| n.contains("every 3 solver steps")));
    // --role wins over an inference.
    let rules = RoleRules {
        overrides: vec![("c2".into(), Role::Probe)],
        ..RoleRules::default()
    };
    assert_eq!(assign(s, &rules).roles[1], Role::Probe);
    // Time only: the stride is unknown, and said.
    let ev = same_however_cut(&headerless(30, 3, false));
    let s = &ev.full[0];
    assert_eq!(assign(s, &RoleRules::default()).roles[0], Role::Time);
    assert!(s.notes.iter().any(|n| n.contains("stride is unknown")));
}

#[test]
fn headerless_rows_wait_for_inference_but_a_blow_up_does_not() {
    let mut r = Reader::new(&ParseOptions::default(), &RoleRules::default());
    let mut ev = Events::default();
    r.feed(b"0 0.0 1.0\n3 0.003 1.1\n6 0.006 1.2\n", &mut ev);
    assert!(ev.rows.is_empty(), "three rows are held to infer the roles");
    r.feed(b"9 0.009 nan\n", &mut ev);
    assert_eq!(
        ev.rows.len(),
        4,
        "a non-finite value settles the table at once"
    );
    let roles = assign(&ev.full[0], &RoleRules::default());
    assert_eq!(roles.roles[1], Role::Time);
}

#[test]
fn inferred_time_going_back_starts_a_segment() {
    let mut bytes = headerless(10, 1, false);
    bytes.extend(headerless(5, 1, false));
    let ev = same_however_cut(&bytes);
    assert_eq!(ev.segments, [(11, SegmentReason::TimeBackwards)]);
}

fn utf16(text: &str, big_endian: bool) -> Vec<u8> {
    let mut v = if big_endian {
        vec![0xFE, 0xFF]
    } else {
        vec![0xFF, 0xFE]
    };
    for u in text.encode_utf16() {
        v.extend(if big_endian {
            u.to_be_bytes()
        } else {
            u.to_le_bytes()
        });
    }
    v
}

/// Byte-order marks as the Unicode Standard defines them (§23.8, U+FEFF):
/// EF BB BF for UTF-8, FF FE for UTF-16 little-endian, FE FF for big-endian.
#[test]
fn byte_order_marks_keep_the_first_name() {
    let text = "time;kinetic energy [J]\n0;1\n0.001;1.5\n";
    let plain = read(text.as_bytes());
    let mut utf8 = b"\xEF\xBB\xBF".to_vec();
    utf8.extend(text.as_bytes());
    for bytes in [utf8, utf16(text, false), utf16(text, true)] {
        let ev = same_however_cut(&bytes);
        assert_eq!(ev.schemas, plain.schemas);
        assert_eq!(ev.rows, plain.rows);
        assert!(skipped_rows(&ev).is_empty());
    }
}

#[test]
fn names_lose_control_characters_and_terminal_escapes() {
    let ev = read(b"time,\x1b]0;pwned\x07ke,\x1b[31mie\x1b[0m\x08\n0,1,2\n");
    assert_eq!(ev.schemas[0].1, ["time", "ke", "ie"]);
}

#[test]
fn a_comment_declares_the_scheme() {
    let ev = read(b"# scheme: central difference\ntime ke\n0 1\n");
    assert_eq!(
        ev.full[0].declared.scheme,
        Some((1, "central difference".to_owned()))
    );
    // A declaration after the header but before the first row still counts.
    let ev = read(b"time ke\n# integrator = Newmark beta=0.25 gamma=0.5\n0 1\n");
    assert_eq!(
        ev.full.last().and_then(|s| s.declared.scheme.clone()),
        Some((2, "Newmark beta=0.25 gamma=0.5".to_owned()))
    );
}

/// A step size printed inside a table, with rows of the same table after it,
/// is a skipped line of that table, not a declaration for the next run; one
/// printed between two runs is the next run's (the `timestep` command echoed
/// before `run`, LAMMPS manual, `timestep`).
#[test]
fn a_step_size_inside_a_table_is_not_a_declaration() {
    let mut t = Text::default();
    t.push("timestep 0.005");
    let header = t.push("Step Temp TotEng");
    for i in 0..4 {
        t.push(format!("{} 1.0 -2.0", i * 10));
    }
    let inside = t.push("dt = 0.001");
    for i in 4..8 {
        t.push(format!("{} 1.0 -2.0", i * 10));
    }
    let ev = same_however_cut(&t.bytes());
    assert_eq!(ev.full.len(), 1);
    assert_eq!(ev.full[0].names_from, NamesFrom::HeaderLine(header));
    assert_eq!(ev.full[0].declared.step_size, Some((1, 0.005)));
    assert_eq!(skipped_rows(&ev), [inside]);
}
