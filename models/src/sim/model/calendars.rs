//! Departments' working hours: machines start nothing outside a working window, and at its end they finish or pause the operation under way.
//!
//! A department with a calendar tracks each machine (see `breakdowns.rs`).
//! Lots keep arriving and queue while it is off shift. With `finish`, an
//! operation under way runs to its end and the machine then stops; with
//! `pause`, it stops at once and goes on with the time it had left when the
//! next window opens. Nothing here draws a random number.

use layflow_engine::Calendar;

use super::{Event, PlantModel, NONE};
use crate::sim::DutyCursor;

impl PlantModel<'_> {
    /// Puts every department with a calendar in its state at time 0 and schedules its first change.
    pub(super) fn start_calendars(&mut self, cal: &mut Calendar<Event>) {
        for d in 0..self.plan.n_departments {
            let Some(c) = self.plan.calendars[d].as_ref() else {
                continue;
            };
            self.departments[d].duty = DutyCursor::start(&c.duty);
            self.departments[d].on_shift = c.duty.on_at_start;
            let first = self.next_shift_change(d);
            if !c.duty.on_at_start {
                self.departments[d].off_s += self.in_window(0.0, first);
                self.by_off_shift(d, 0.0, first);
            }
            if first <= self.window.1 {
                cal.schedule(first, Event::DeptShift { dept: d as u32 });
            }
        }
    }

    /// The time of department `d`'s next calendar change, and advance past it.
    fn next_shift_change(&mut self, d: usize) -> f64 {
        let duty = &self.plan.calendars[d].as_ref().expect("a department with a calendar").duty;
        self.departments[d].duty.advance(duty)
    }

    /// Department `d`'s working window ends or begins now.
    pub(super) fn dept_shift(&mut self, d: usize, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let next = self.next_shift_change(d);
        if next <= self.window.1 {
            cal.schedule(next, Event::DeptShift { dept: d as u32 });
        }
        let pause = self.plan.calendars[d].as_ref().is_some_and(|c| c.pause);
        let first = self.departments[d].first_machine as usize;
        let machines = first..first + self.plan.machines[d] as usize;
        if self.departments[d].on_shift {
            // Off until the next change: scheduled time is known now, clipped to the window.
            let off = self.in_window(now, next);
            self.departments[d].off_s += off;
            self.by_off_shift(d, now, next);
            self.departments[d].on_shift = false;
            if pause {
                for k in machines {
                    if self.machines[k].running {
                        self.stop_phase(k as u32, now);
                        self.departments[d].busy_level.add(now, -1.0);
                    }
                }
            }
            return;
        }
        self.departments[d].on_shift = true;
        for k in machines {
            let m = &self.machines[k];
            if !m.up {
                continue;
            }
            if m.lot != NONE {
                // Paused at the end of the last window (or repaired since): go on.
                if pause && !m.blocked && !m.running {
                    self.departments[d].busy_level.add(now, 1.0);
                    if self.plan.has_crews {
                        self.crew_run(k as u32, cal);
                    } else {
                        self.run_machine(k as u32, cal);
                    }
                }
                continue;
            }
            let dep = &mut self.departments[d];
            if let Some(w) = dep.queue.pop() {
                dep.queue_level.add(now, -1.0);
                dep.busy += 1;
                dep.busy_level.add(now, 1.0);
                self.start_on(k as u32, w, cal);
            }
        }
        if self.plan.staging {
            self.on_inbound_space(d, cal);
        }
    }
}
