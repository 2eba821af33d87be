//! The source of every registered model: authors, title, venue and year, one constant
//! per publication (or per combination a model follows), shared by the models that cite it.

pub(super) const WALTER: &str = "B. Walter, S. R. Marschner, H. Li, K. E. Torrance, \
    \"Microfacet Models for Refraction through Rough Surfaces\", Eurographics Symposium on \
    Rendering, 2007";
pub(super) const HEITZ: &str = "E. Heitz, \"Understanding the Masking-Shadowing Function in \
    Microfacet-Based BRDFs\", Journal of Computer Graphics Techniques 3(2), 2014";
pub(super) const GGX_CITE: &str =
    "T. S. Trowbridge, K. P. Reitz, \"Average irregularity representation \
    of a rough surface for ray reflection\", Journal of the Optical Society of America, 1975; \
    B. Walter, S. R. Marschner, H. Li, K. E. Torrance, \"Microfacet Models for Refraction \
    through Rough Surfaces\", Eurographics Symposium on Rendering, 2007";
pub(super) const BECKMANN_CITE: &str =
    "P. Beckmann, A. Spizzichino, \"The Scattering of Electromagnetic \
    Waves from Rough Surfaces\", 1963; B. Walter et al., \"Microfacet Models for Refraction \
    through Rough Surfaces\", Eurographics Symposium on Rendering, 2007";
pub(super) const BLINN_CITE: &str =
    "J. F. Blinn, \"Models of Light Reflection for Computer Synthesized \
    Pictures\", SIGGRAPH 1977; normalisation from B. Walter et al., \"Microfacet Models for \
    Refraction through Rough Surfaces\", Eurographics Symposium on Rendering, 2007";
pub(super) const HEITZ_LAGARDE: &str =
    "E. Heitz, \"Understanding the Masking-Shadowing Function in \
    Microfacet-Based BRDFs\", Journal of Computer Graphics Techniques 3(2), 2014; in this form \
    S. Lagarde, C. de Rousiers, course notes, SIGGRAPH 2014 course \"Physically Based Shading \
    in Theory and Practice\"";
pub(super) const GUY_AGOPIAN: &str = "R. Guy, M. Agopian, design documentation of an open-source \
    real-time physically based renderer, 2018 (common practice; quoted from memory)";
pub(super) const HAMMON: &str =
    "E. Hammon Jr., \"PBR Diffuse Lighting for GGX+Smith Microsurfaces\", \
    Game Developers Conference, 2017";
pub(super) const SCHLICK_KARIS: &str =
    "C. Schlick, \"An Inexpensive BRDF Model for Physically-based \
    Rendering\", Computer Graphics Forum (Eurographics), 1994; B. Karis, course notes, \
    SIGGRAPH 2013 course \"Physically Based Shading in Theory and Practice\"";
pub(super) const SCHLICK: &str = "C. Schlick, \"An Inexpensive BRDF Model for Physically-based \
    Rendering\", Computer Graphics Forum (Eurographics), 1994";
pub(super) const SCHLICK_F90: &str =
    "C. Schlick, \"An Inexpensive BRDF Model for Physically-based \
    Rendering\", Computer Graphics Forum (Eurographics), 1994; F90 from R. Guy, M. Agopian, \
    design documentation of an open-source real-time renderer, 2018, after C. Schüler, \
    \"An Efficient and Physically Plausible Real-Time Shading Model\", ShaderX7, 2009 \
    (common practice; attribution from memory)";
pub(super) const BORN_WOLF: &str =
    "A. Fresnel, 1823, as given by M. Born, E. Wolf, \"Principles of \
    Optics\", 1959";
pub(super) const LAMBERT: &str = "J. H. Lambert, \"Photometria\", 1760";
pub(super) const BURLEY: &str =
    "B. Burley, course notes, SIGGRAPH 2012 course \"Practical Physically \
    Based Shading in Film and Game Production\"";
pub(super) const BURLEY_KARIS: &str = "B. Burley, course notes, SIGGRAPH 2012 course \"Practical \
    Physically Based Shading in Film and Game Production\"; B. Karis, course notes, \
    SIGGRAPH 2013 course \"Physically Based Shading in Theory and Practice\"";
pub(super) const COOK_TORRANCE: &str =
    "R. L. Cook, K. E. Torrance, \"A Reflectance Model for Computer \
    Graphics\", ACM Transactions on Graphics, 1982; B. Walter et al., \"Microfacet Models \
    for Refraction through Rough Surfaces\", Eurographics Symposium on Rendering, 2007";
pub(super) const PHONG: &str = "B. T. Phong, \"Illumination for Computer Generated Pictures\", \
    Communications of the ACM, 1975";

pub(super) const OREN_NAYAR: &str =
    "M. Oren, S. K. Nayar, \"Generalization of Lambert's Reflectance \
    Model\", SIGGRAPH 1994";
pub(super) const CHARLIE: &str =
    "A. Conty Estevez, C. Kulla, \"Production Friendly Microfacet Sheen \
    BRDF\", technical report, 2017; visibility from M. Ashikhmin, S. Premoze, \
    \"Distribution-based BRDFs\", technical report, 2007, as used by D. Neubelt, \
    M. Pettineo, course notes, SIGGRAPH 2013 course \"Physically Based Shading in Theory and \
    Practice\"";
pub(super) const VELVET: &str =
    "M. Ashikhmin, S. Premoze, \"Distribution-based BRDFs\", technical \
    report, 2007";
pub(super) const NEUBELT: &str =
    "M. Ashikhmin, S. Premoze, \"Distribution-based BRDFs\", technical \
    report, 2007; D. Neubelt, M. Pettineo, course notes, SIGGRAPH 2013 course \"Physically \
    Based Shading in Theory and Practice\"";
pub(super) const GTR1: &str =
    "B. Burley, course notes, SIGGRAPH 2012 course \"Practical Physically \
    Based Shading in Film and Game Production\"; E. M. Berry, \"Diffuse reflection of light \
    from a matt surface\", Journal of the Optical Society of America, 1923";
pub(super) const KELEMEN: &str = "C. Kelemen, L. Szirmay-Kalos, \"A Microfacet Based Coupled \
    Specular-Matte BRDF Model with Importance Sampling\", Eurographics 2001 short \
    presentations";
pub(super) const CLEARCOAT: &str = "B. Burley, course notes, SIGGRAPH 2012 course \"Practical \
    Physically Based Shading in Film and Game Production\"; C. Kelemen, L. Szirmay-Kalos, \
    Eurographics 2001 short presentations; C. Schlick, Computer Graphics Forum, 1994";
pub(super) const KULLA_CONTY: &str = "C. Kulla, A. Conty, course notes, SIGGRAPH 2017 course \
    \"Physically Based Shading in Theory and Practice\"; integrated numerically";
pub(super) const TURQUIN: &str = "E. Turquin, \"Practical multiple scattering compensation for \
    microfacet models\", technical report, 2019; E integrated numerically";
pub(super) const SPLIT_SUM: &str =
    "B. Karis, course notes, SIGGRAPH 2013 course \"Physically Based \
    Shading in Theory and Practice\"; integrated numerically with height-correlated Smith";
pub(super) const SPLIT_SUM_FIT: &str =
    "B. Karis, \"Physically Based Shading on Mobile\", web article, \
    2014 (coefficients quoted from memory: common practice)";
pub(super) const SRGB: &str = "IEC 61966-2-1:1999, default RGB colour space sRGB";
pub(super) const OCTAHEDRAL: &str =
    "Z. H. Cigolle, S. Donow, D. Evangelakos, M. Mara, M. McGuire, \
    Q. Meyer, \"A Survey of Efficient Representations for Independent Unit Vectors\", \
    Journal of Computer Graphics Techniques 3(2), 2014";
pub(super) const FILMIC: &str =
    "K. Narkowicz, web article on a fitted filmic tone-mapping curve, 2015 \
    (coefficients quoted from memory: common practice)";
