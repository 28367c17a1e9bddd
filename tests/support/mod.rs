//! Scaffolding shared by the whole-program tests: each test file takes it with `mod support;`.
//! Not every test file uses every helper.
#![allow(dead_code)]

pub mod sessions;
pub mod sim;
