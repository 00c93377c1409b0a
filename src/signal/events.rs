//! A fixed-capacity log of quality transitions. Never allocates; when full
//! it drops the oldest event first and counts what it dropped.

use heapless::Deque;

use super::FaultCode;
use crate::quality::Quality;

/// One quality transition of a channel (or derived value).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Event {
    /// Time of the sample that caused it, ms (the caller's 32-bit tick).
    pub time_ms: u32,
    /// Channel id.
    pub channel: u8,
    /// Quality before.
    pub from: Quality,
    /// Quality after.
    pub to: Quality,
    /// Fault of the sample (`None` on recovery).
    pub fault: FaultCode,
}

/// Ring of the last `E` events (`E >= 1`, checked at compile time).
#[derive(Clone, Debug)]
pub struct EventLog<const E: usize> {
    events: Deque<Event, E>,
    dropped: u32,
}

impl<const E: usize> Default for EventLog<E> {
    fn default() -> Self {
        Self::new()
    }
}

impl<const E: usize> EventLog<E> {
    /// An empty log.
    pub const fn new() -> Self {
        const { assert!(E >= 1, "the event log needs room for one event") };
        EventLog {
            events: Deque::new(),
            dropped: 0,
        }
    }

    /// Appends `event`, dropping the oldest if full.
    pub fn push(&mut self, event: Event) {
        if self.events.is_full() {
            let _ = self.events.pop_front();
            self.dropped = self.dropped.saturating_add(1);
        }
        // Cannot fail: there is room now.
        let _ = self.events.push_back(event);
    }

    /// Removes and returns the oldest event.
    pub fn pop(&mut self) -> Option<Event> {
        self.events.pop_front()
    }

    /// The events held, oldest first.
    pub fn iter(&self) -> impl Iterator<Item = &Event> {
        self.events.iter()
    }

    /// Events held.
    pub fn len(&self) -> usize {
        self.events.len()
    }

    /// `true` if no event is held.
    pub fn is_empty(&self) -> bool {
        self.events.is_empty()
    }

    /// Events dropped because the log was full (saturates).
    pub fn dropped(&self) -> u32 {
        self.dropped
    }
}
