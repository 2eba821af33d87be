// Quillmere image-based lighting: the specular part of an environment light,
// with the split-sum environment BRDF fetched from a pre-integrated table
// (a texture bound by the suite to the tool's own split-sum table).

@group(0) @binding(0) var env_brdf_lut: texture_2d<f32>;
@group(0) @binding(1) var env_brdf_sampler: sampler;

// Scale (x) and bias (y) of F0 for image-based specular: the table's u axis is
// n·v over [0, 1], its v axis perceptual roughness over [0.25, 1] (smoother
// materials take the mirror path, which does not use the table).
fn env_brdf(n_dot_v: f32, roughness: f32) -> vec2<f32> {
    let r = (clamp(roughness, 0.25, 1.0) - 0.25) / 0.75;
    let uv = vec2<f32>(clamp(n_dot_v, 0.0, 1.0), r);
    return textureSampleLevel(env_brdf_lut, env_brdf_sampler, uv, 0.0).xy;
}

// The directional albedo of the specular lobe for reflectance f0:
// f0 · scale + bias.
fn specular_albedo(n_dot_v: f32, roughness: f32, f0: f32) -> f32 {
    let ab = env_brdf(n_dot_v, roughness);
    return f0 * ab.x + ab.y;
}
