//! The model contract and the run loop that drives it.

use crate::calendar::{Calendar, Time};

/// A simulation model: a state that handles one event at a time and may schedule more.
pub trait Model {
    /// The model's own event type: small and `Copy`, which keeps the calendar fast.
    type Event: Copy;

    /// Handle `event` at the calendar's current time.
    fn handle(&mut self, event: Self::Event, calendar: &mut Calendar<Self::Event>);
}

/// Handle events in time order until the next one lies after `until` or none
/// is left; the clock is then moved to `until`. Returns the events handled.
pub fn run_until<M: Model>(model: &mut M, calendar: &mut Calendar<M::Event>, until: Time) -> u64 {
    let mut handled = 0;
    while let Some(t) = calendar.peek_time() {
        if t > until {
            break;
        }
        let (_, event) = calendar.take_next().expect("peeked event exists");
        model.handle(event, calendar);
        handled += 1;
    }
    calendar.advance_to(until);
    handled
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A tiny M/D/1-like check of the loop: arrivals every 2 s, service 1 s.
    struct Ticker {
        arrivals: u32,
    }
    impl Model for Ticker {
        type Event = u8;
        fn handle(&mut self, e: u8, cal: &mut Calendar<u8>) {
            if e == 0 {
                self.arrivals += 1;
                cal.schedule_in(2.0, 0);
            }
        }
    }

    #[test]
    fn stops_at_the_horizon() {
        let mut m = Ticker { arrivals: 0 };
        let mut cal = Calendar::new();
        cal.schedule(0.0, 0);
        let n = run_until(&mut m, &mut cal, 9.0);
        // Events at 0, 2, 4, 6, 8.
        assert_eq!((n, m.arrivals), (5, 5));
        assert_eq!(cal.now(), 9.0);
        run_until(&mut m, &mut cal, 10.0);
        assert_eq!(m.arrivals, 6);
    }
}
