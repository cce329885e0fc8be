//! What every stepper of the catalogue shares: the snapshot of a state, the
//! [`Stepper`] trait, the columns a case writes ([`Q`]) and the loop that
//! steps a run and records every k-th step ([`drive`]).

use super::chain::Books;
use super::trace::{Column, Role, Row, Trace, overflowed};

/// A state as written.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Snap {
    /// Simulated time.
    pub t: f64,
    /// Steps taken.
    pub step: u64,
    /// Step in use.
    pub dt: f64,
    /// Newton iterations of the last step (implicit schemes).
    pub iters: u32,
    /// Nodal displacements.
    pub u: Vec<f64>,
    /// Nodal velocities.
    pub v: Vec<f64>,
    /// Energy books.
    pub books: Books,
    /// Element forces.
    pub forces: Vec<f64>,
}

/// One time-stepping run.
pub trait Stepper {
    /// Take one step (an adaptive stepper may retry inside).
    fn step(&mut self);
    /// The current state.
    fn snap(&self) -> Snap;
    /// Whether a step since the last call went past the stability limit.
    fn take_flag(&mut self) -> bool;
    /// The solver's own stop message, once it has stopped.
    fn stopped(&self) -> Option<String>;
}

/// A quantity a case writes.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Q {
    /// Time.
    Time,
    /// Step counter.
    Step,
    /// Step size.
    Dt,
    /// Newton iterations.
    Iters,
    /// Kinetic energy.
    Kinetic,
    /// Strain energy.
    Strain,
    /// Contact energy.
    Contact,
    /// Strain + contact.
    Internal,
    /// Strain + contact + gravity potential.
    Potential,
    /// Gravity potential.
    Gravity,
    /// Plastic dissipation.
    Plastic,
    /// Viscous dissipation.
    Damping,
    /// Friction dissipation.
    Friction,
    /// External work.
    External,
    /// Kinetic + strain + contact + gravity potential.
    Total,
    /// Displacement of a node.
    Disp(usize),
    /// Velocity of a node.
    Vel(usize),
    /// Force of an element.
    Force(usize),
}

impl Q {
    /// The role the label rule gives this quantity.
    pub fn role(self) -> Role {
        match self {
            Q::Time => Role::Time,
            Q::Step => Role::Step,
            Q::Dt => Role::Dt,
            Q::Kinetic => Role::Kinetic,
            Q::Strain | Q::Contact | Q::Internal | Q::Potential | Q::Gravity => Role::Internal,
            Q::Plastic | Q::Damping | Q::Friction => Role::Dissipated,
            Q::External => Role::External,
            Q::Total => Role::Total,
            Q::Iters | Q::Disp(_) | Q::Vel(_) | Q::Force(_) => Role::Other,
        }
    }

    /// Its value at a snapshot.
    pub fn value(self, s: &Snap) -> f64 {
        let b = &s.books;
        match self {
            Q::Time => s.t,
            Q::Step => s.step as f64,
            Q::Dt => s.dt,
            Q::Iters => f64::from(s.iters),
            Q::Kinetic => b.kinetic,
            Q::Strain => b.strain,
            Q::Contact => b.contact,
            Q::Internal => b.strain + b.contact,
            Q::Potential => b.strain + b.contact + b.gravity,
            Q::Gravity => b.gravity,
            Q::Plastic => b.plastic,
            Q::Damping => b.damping,
            Q::Friction => b.friction,
            Q::External => b.external,
            Q::Total => b.kinetic + b.strain + b.contact + b.gravity,
            Q::Disp(j) => s.u[j],
            Q::Vel(j) => s.v[j],
            Q::Force(e) => s.forces[e],
        }
    }
}

/// Rows of a run being recorded.
#[derive(Debug, Clone, PartialEq)]
pub struct Recorder {
    qs: Vec<Q>,
    /// The record so far.
    pub trace: Trace,
}

impl Recorder {
    /// A recorder writing these (name, quantity) columns.
    pub fn new(cols: &[(&str, Q)]) -> Recorder {
        let columns = cols
            .iter()
            .map(|(n, q)| Column {
                name: (*n).to_string(),
                role: q.role(),
            })
            .collect();
        Recorder {
            qs: cols.iter().map(|c| c.1).collect(),
            trace: Trace::new(columns),
        }
    }

    /// Record a row; true when a value has overflowed.
    pub fn row(&mut self, s: &Snap, past_limit: bool) -> bool {
        let values: Vec<f64> = self.qs.iter().map(|q| q.value(s)).collect();
        let bad = values.iter().any(|&v| overflowed(v));
        self.trace.row(Row {
            values,
            past_limit,
            dt: s.dt,
            thermostat_work: 0.0,
        });
        bad
    }
}

/// How long a run goes and how it is written.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Plan {
    /// A row every `stride` steps.
    pub stride: u64,
    /// Stop after this many steps in all.
    pub max_steps: u64,
    /// Stop once simulated time reaches this.
    pub t_end: f64,
    /// Rows still written after the first overflowed row.
    pub tail: usize,
    /// A row with a value at or above this (in magnitude) counts as
    /// overflowed for the tail (the writer decides what is written).
    pub bad_at: f64,
}

impl Plan {
    /// Every `stride` steps up to `t_end`, at most 10⁸ steps, two rows after
    /// an overflow.
    pub fn new(stride: u64, t_end: f64) -> Plan {
        Plan {
            stride,
            max_steps: 20_000_000,
            t_end,
            tail: 2,
            bad_at: 1e300,
        }
    }
}

/// Step a run, recording every `plan.stride`-th step. Returns the steps taken.
pub fn drive(s: &mut dyn Stepper, rec: &mut Recorder, plan: &Plan) -> u64 {
    let mut flag = false;
    let mut tail: Option<usize> = None;
    let mut n = 0u64;
    loop {
        if n.is_multiple_of(plan.stride) {
            let snap = s.snap();
            let bad = rec.row(&snap, flag)
                || snap.u.iter().chain(&snap.v).any(|x| !x.is_finite())
                || rec
                    .trace
                    .rows()
                    .last()
                    .is_some_and(|r| r.values.iter().any(|v| v.abs() >= plan.bad_at));
            flag = false;
            if bad && tail.is_none() {
                tail = Some(plan.tail);
            }
            match tail {
                Some(0) => break,
                Some(k) => tail = Some(k - 1),
                None => {}
            }
            if snap.t >= plan.t_end || n >= plan.max_steps {
                break;
            }
        }
        s.step();
        n += 1;
        flag |= s.take_flag();
        if let Some(msg) = s.stopped() {
            rec.trace.stop(msg);
            break;
        }
    }
    n
}
