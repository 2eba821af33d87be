// Control flow: loops with break and continue, continuing blocks, switch,
// early returns, short-circuit logic.

fn collatz(n: u32) -> u32 {
    var x = max(n, 1u);
    var steps = 0u;
    loop {
        if x == 1u || steps >= 500u {
            break;
        }
        if (x & 1u) == 0u {
            x = x / 2u;
        } else {
            x = 3u * x + 1u;
        }
        steps += 1u;
    }
    return steps;
}

fn switch_select(x: i32) -> i32 {
    var r = 0;
    switch x & 15 {
        case 0, 1: {
            r = 10;
        }
        case 2: {
            r = x * 3;
        }
        default: {
            r = -1;
        }
        case 7, 9, 11: {
            r = x + 100;
            if x > 1000 {
                break;
            }
            r += 1;
        }
    }
    return r;
}

fn loop_continue(n: i32) -> i32 {
    var s = 0;
    for (var i = 0; i < clamp(n, -5, 64); i++) {
        if i % 3 == 0 {
            continue;
        }
        if i > 40 {
            break;
        }
        s += i * i;
    }
    return s;
}

fn continuing_break_if(n: u32) -> u32 {
    var i = 0u;
    var acc = 1u;
    loop {
        acc = acc * 3u + i;
        continuing {
            i += 1u;
            break if i >= (n & 31u);
        }
    }
    return acc;
}

fn nested_return(a: i32, b: i32) -> i32 {
    var i = 0;
    while i < 20 {
        if a > b {
            if i == (a & 7) {
                return i * 100 + b;
            }
        } else if a == b {
            return -7;
        }
        i++;
    }
    return a ^ b;
}

fn logic(a: bool, b: bool, c: bool) -> vec4<bool> {
    return vec4<bool>(a && b || c, !a, a != b, (a || c) && !(b && c));
}

fn float_branch(x: f32, y: f32) -> f32 {
    if x < y {
        return floor(x);
    } else if x == y {
        return 0.5;
    }
    var h = x;
    var n = 0.0;
    while h > 1.0 && n < 200.0 {
        h = h * 0.5;
        n += 1.0;
    }
    return n + h;
}
