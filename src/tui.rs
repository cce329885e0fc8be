//! Terminal enter/restore, panic hook and signal handling for the dashboard.
