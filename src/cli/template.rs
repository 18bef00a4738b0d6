//! `mixband template` is served directly from [`crate::config::TEMPLATE`].
