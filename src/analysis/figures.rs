//! Figures for `report`.
