//! The WebGPU back end (feature `gpu`): wrapping, device handling, the corpus differential and the demo suite on a device.

mod cli;
mod common;
mod corpus;
mod device;
mod gate;
mod shapes;
mod wrap;
