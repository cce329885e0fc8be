//! Serde types of the scan report: the JSON contract that scripts rely on.
