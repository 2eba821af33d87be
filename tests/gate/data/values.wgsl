// Returns its f32 argument unchanged: the CLI's value reading, seen through a function.
fn pick(i: i32, u: u32, x: f32) -> f32 {
    return x;
}
