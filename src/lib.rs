pub mod elements;
