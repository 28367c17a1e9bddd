//! Session reports and batch statistics over many sessions.
