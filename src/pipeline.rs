//! Bytes → rows → detectors → alarms, in one object shared by `scan`, `guard`
//! and `watch`, so that they give the same alarms, line for line, on the same bytes.
