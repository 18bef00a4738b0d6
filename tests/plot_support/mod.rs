pub mod plotrun;
