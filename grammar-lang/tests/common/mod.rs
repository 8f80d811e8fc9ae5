pub mod format_checks;
