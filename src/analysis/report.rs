//! `report`: one session → tables, a text summary and figures.
