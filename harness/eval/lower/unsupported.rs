//! Names of unsupported constructs, as a WGSL author writes them, for the
//! "not supported in CPU evaluation" diagnostics.

/// The WGSL built-in behind a naga `ImageSample` ("Texture Built-in Functions").
pub(super) fn sample_name(
    gather: bool,
    level: &naga::SampleLevel,
    compare: bool,
    clamp_to_edge: bool,
) -> &'static str {
    use naga::SampleLevel as L;
    match (gather, compare, level) {
        (true, true, _) => "`textureGatherCompare`",
        (true, false, _) => "`textureGather`",
        (false, true, L::Zero) => "`textureSampleCompareLevel`",
        (false, true, _) => "`textureSampleCompare`",
        _ if clamp_to_edge => "`textureSampleBaseClampToEdge`",
        (false, false, L::Auto) => "`textureSample`",
        (false, false, L::Zero | L::Exact(_)) => "`textureSampleLevel`",
        (false, false, L::Bias(_)) => "`textureSampleBias`",
        (false, false, L::Gradient { .. }) => "`textureSampleGrad`",
    }
}

/// `dpdx`, `dpdyFine`, `fwidthCoarse`, ... ("Derivative Built-in Functions").
pub(super) fn derivative_name(axis: naga::DerivativeAxis, ctrl: naga::DerivativeControl) -> String {
    let base = match axis {
        naga::DerivativeAxis::X => "dpdx",
        naga::DerivativeAxis::Y => "dpdy",
        naga::DerivativeAxis::Width => "fwidth",
    };
    let suffix = match ctrl {
        naga::DerivativeControl::Coarse => "Coarse",
        naga::DerivativeControl::Fine => "Fine",
        naga::DerivativeControl::None => "",
    };
    format!("`{base}{suffix}`")
}

/// `atomicAdd`, ... ("Atomic Built-in Functions").
pub(super) fn atomic_name(fun: &naga::AtomicFunction) -> &'static str {
    use naga::AtomicFunction as A;
    match fun {
        A::Add => "`atomicAdd`",
        A::Subtract => "`atomicSub`",
        A::And => "`atomicAnd`",
        A::ExclusiveOr => "`atomicXor`",
        A::InclusiveOr => "`atomicOr`",
        A::Min => "`atomicMin`",
        A::Max => "`atomicMax`",
        A::Exchange { compare: None } => "`atomicExchange`",
        A::Exchange { compare: Some(_) } => "`atomicCompareExchangeWeak`",
    }
}

/// `workgroupBarrier`, ... ("Synchronization Built-in Functions").
pub(super) fn barrier_name(b: naga::Barrier) -> &'static str {
    if b.contains(naga::Barrier::WORK_GROUP) {
        "`workgroupBarrier`"
    } else if b.contains(naga::Barrier::STORAGE) {
        "`storageBarrier`"
    } else if b.contains(naga::Barrier::TEXTURE) {
        "`textureBarrier`"
    } else if b.contains(naga::Barrier::SUB_GROUP) {
        "`subgroupBarrier`"
    } else {
        "a barrier"
    }
}

/// A module-scope variable outside the CPU subset, as declared in WGSL.
pub(super) fn global_name(name: &str, space: naga::AddressSpace) -> String {
    use naga::AddressSpace as A;
    match space {
        A::Uniform => format!("`var<uniform> {name}` (a uniform buffer)"),
        A::Storage { .. } => format!("`var<storage> {name}` (a storage buffer)"),
        A::WorkGroup => format!("`var<workgroup> {name}` (workgroup memory)"),
        A::Handle => format!("the resource `{name}` (a texture or sampler binding)"),
        A::Immediate => format!("`var<immediate> {name}`"),
        other => format!("the global `{name}` in address space {other:?}"),
    }
}
