//! The live screen: renders engine snapshots, sends operator commands.
