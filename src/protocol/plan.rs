//! The concrete timeline of a session (placeholder until the planning step lands).
