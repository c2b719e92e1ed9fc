//! The header `include/fixsight.h` is kept by hand; these tests fail when it
//! and the Rust side disagree:
//!
//! * every `extern "C"` function of `src/*.rs` has a prototype with the
//!   same name, parameter names, parameter types and return type, and the
//!   header declares no other function;
//! * every `#[repr(C)]` struct has a `typedef struct` with the same fields
//!   in the same order and of the same types; every object storage has a
//!   `typedef union` sized by its `FXS_*_SIZE` constant;
//! * every numeric `FXS_*` constant of the Rust sources (including the
//!   storage sizes for 32- and 64-bit targets) is `#define`d with the same
//!   value, and the other way round;
//! * every variant of `fixsight::Error` (read from `kernels/src/error.rs`)
//!   has its own status code.
//!
//! Rust types map to C as: `i32` `int32_t`, `u32` `uint32_t`, `i16`
//! `int16_t`, `u16` `uint16_t`, `u8` `uint8_t`, `usize` `uintptr_t`,
//! `c_char` `char`, `FxsCamelCase` `fxs_camel_case`, `*const T`
//! `const T *`, `*mut T` `T *`.

use std::collections::BTreeMap;
use std::format;
use std::path::{Path, PathBuf};
use std::string::{String, ToString};
use std::vec;
use std::vec::Vec;
use syn::{Expr, FnArg, Item, Lit, Pat, ReturnType, Type, UnOp};

fn crate_dir() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// `FxsU8ViewMut` -> `fxs_u8_view_mut`.
fn snake(camel: &str) -> String {
    let mut out = String::new();
    for (i, c) in camel.chars().enumerate() {
        if c.is_ascii_uppercase() {
            if i > 0 {
                out.push('_');
            }
            out.push(c.to_ascii_lowercase());
        } else {
            out.push(c);
        }
    }
    out
}

/// The canonical C spelling of a Rust type: tokens separated by one space.
fn c_type(t: &Type) -> String {
    match t {
        Type::Ptr(p) => {
            let inner = c_type(&p.elem);
            if p.mutability.is_some() {
                format!("{inner} *")
            } else {
                format!("const {inner} *")
            }
        }
        Type::Path(p) => {
            let name = p.path.segments.last().unwrap().ident.to_string();
            match name.as_str() {
                "i32" => "int32_t".into(),
                "u32" => "uint32_t".into(),
                "i16" => "int16_t".into(),
                "u16" => "uint16_t".into(),
                "u8" => "uint8_t".into(),
                "usize" => "uintptr_t".into(),
                "c_char" => "char".into(),
                n if n.starts_with("Fxs") => snake(n),
                n => panic!("no C spelling for Rust type {n}"),
            }
        }
        other => panic!("no C spelling for {}", quote::quote!(#other)),
    }
}

/// `const fxs_u8_view *src` -> (`const fxs_u8_view *`, `src`).
fn c_decl(decl: &str) -> (String, String) {
    let spaced = decl.replace('*', " * ");
    let mut toks: Vec<&str> = spaced.split_whitespace().collect();
    let name = toks.pop().expect("declaration without a name").to_string();
    (toks.join(" "), name)
}

#[derive(Debug, Default)]
struct Header {
    /// name -> (return type, [(type, name)]).
    functions: BTreeMap<String, (String, Vec<(String, String)>)>,
    /// struct name -> [(type, name)].
    structs: BTreeMap<String, Vec<(String, String)>>,
    /// union name -> size macro of its byte array.
    unions: BTreeMap<String, String>,
    /// numeric defines.
    numbers: BTreeMap<String, i64>,
}

fn strip_comments(s: &str) -> String {
    let mut out = String::new();
    let mut rest = s;
    while let Some(i) = rest.find("/*") {
        out.push_str(&rest[..i]);
        let end = rest[i..].find("*/").expect("unterminated comment");
        rest = &rest[i + end + 2..];
    }
    out.push_str(rest);
    out.lines()
        .map(|l| l.split("//").next().unwrap())
        .collect::<Vec<_>>()
        .join("\n")
}

fn number(v: &str) -> Option<i64> {
    v.trim_start_matches('(').trim_end_matches(')').parse().ok()
}

fn parse_header(text: &str) -> Header {
    let text = strip_comments(text);
    let mut h = Header::default();
    let mut body = String::new();
    let mut cplusplus = false;
    for line in text.lines() {
        let l = line.trim();
        if l == "#ifdef __cplusplus" {
            cplusplus = true;
        } else if cplusplus {
            cplusplus = l != "#endif";
        } else if let Some(def) = l.strip_prefix("#define ") {
            let mut it = def.split_whitespace();
            let name = it.next().unwrap().to_string();
            if let Some(n) = it.next().and_then(number) {
                assert!(h.numbers.insert(name.clone(), n).is_none(), "{name} twice");
            }
        } else if !l.starts_with('#') {
            body.push_str(l);
            body.push(' ');
        }
    }
    for stmt in body.split(';').map(str::trim) {
        if stmt.contains('(') && !stmt.contains('{') && !stmt.contains('}') {
            let (head, params) = stmt.split_once('(').unwrap();
            let params = params.trim_end_matches(')');
            let (ret, name) = c_decl(head);
            let ps = params.split(',').map(|p| c_decl(p.trim())).collect();
            assert!(h.functions.insert(name.clone(), (ret, ps)).is_none());
        }
    }
    // Typedefs: tag, fields, alias.
    let mut rest = body.as_str();
    loop {
        let next = |k: &str| rest.find(k);
        let i = match (next("typedef struct "), next("typedef union ")) {
            (Some(a), Some(b)) => a.min(b),
            (Some(a), None) | (None, Some(a)) => a,
            (None, None) => break,
        };
        rest = &rest[i + 8..];
        let is_union = rest.starts_with("union ");
        let after = rest.split_once(' ').unwrap().1;
        let (name, tail) = after.split_once('{').unwrap();
        let (inner, tail) = tail.split_once('}').unwrap();
        let fields: Vec<(String, String)> = inner
            .split(';')
            .map(str::trim)
            .filter(|f| !f.is_empty())
            .map(c_decl)
            .collect();
        let alias = tail.split(';').next().unwrap().trim();
        assert_eq!(alias, name.trim(), "typedef name differs from tag");
        if is_union {
            let bytes = &fields[0];
            assert_eq!(fields.len(), 2, "union {name}: bytes and align_");
            assert_eq!(fields[1], ("uint64_t".into(), "align_".into()));
            let (arr, size) = bytes.1.split_once('[').expect("byte array");
            assert_eq!((bytes.0.as_str(), arr), ("uint8_t", "bytes"));
            h.unions
                .insert(name.trim().into(), size.trim_end_matches(']').into());
        } else {
            h.structs.insert(name.trim().into(), fields);
        }
        rest = tail;
    }
    h
}

#[derive(Debug, Default)]
struct RustSide {
    functions: BTreeMap<String, (String, Vec<(String, String)>)>,
    structs: BTreeMap<String, Vec<(String, String)>>,
    /// storage type (C name) -> size constant name.
    storages: BTreeMap<String, String>,
    numbers: BTreeMap<String, i64>,
}

fn int_expr(e: &Expr) -> Option<i64> {
    match e {
        Expr::Lit(l) => match &l.lit {
            Lit::Int(i) => i.base10_parse().ok(),
            _ => None,
        },
        Expr::Unary(u) if matches!(u.op, UnOp::Neg(_)) => int_expr(&u.expr).map(|v| -v),
        Expr::Paren(p) => int_expr(&p.expr),
        _ => None,
    }
}

fn parse_rust(dir: &Path) -> RustSide {
    let mut r = RustSide::default();
    for e in std::fs::read_dir(dir).unwrap() {
        let p = e.unwrap().path();
        if p.extension().and_then(|x| x.to_str()) != Some("rs") {
            continue;
        }
        let file = syn::parse_file(&std::fs::read_to_string(&p).unwrap()).unwrap();
        for item in &file.items {
            match item {
                Item::Fn(f) if f.sig.abi.is_some() => {
                    let name = f.sig.ident.to_string();
                    let ret = match &f.sig.output {
                        ReturnType::Type(_, t) => c_type(t),
                        ReturnType::Default => "void".into(),
                    };
                    let params = f
                        .sig
                        .inputs
                        .iter()
                        .map(|a| match a {
                            FnArg::Typed(t) => {
                                let Pat::Ident(id) = &*t.pat else {
                                    panic!("{name}: parameter pattern")
                                };
                                (c_type(&t.ty), id.ident.to_string())
                            }
                            FnArg::Receiver(_) => panic!("{name}: self"),
                        })
                        .collect();
                    assert!(f.attrs.iter().any(|a| a.path().is_ident("no_mangle")));
                    r.functions.insert(name, (ret, params));
                }
                Item::Struct(s) if s.ident.to_string().starts_with("Fxs") => {
                    let fields = s
                        .fields
                        .iter()
                        .map(|f| (c_type(&f.ty), f.ident.as_ref().unwrap().to_string()))
                        .collect();
                    r.structs.insert(snake(&s.ident.to_string()), fields);
                }
                Item::Const(c) if c.ident.to_string().starts_with("FXS_") => {
                    if let Some(v) = int_expr(&c.expr) {
                        r.numbers.insert(c.ident.to_string(), v);
                    }
                }
                Item::Macro(m) if m.mac.path.segments.last().unwrap().ident == "object_storage" => {
                    storage_macro(&m.mac.tokens, &mut r);
                }
                Item::Macro(m) if m.mac.path.segments.last().unwrap().ident == "descriptors" => {
                    // `$(#[doc])* Name, *const T, T, writable;`: every
                    // descriptor has the fields data, len, width, height, stride.
                    let toks: Vec<String> = m
                        .mac
                        .tokens
                        .clone()
                        .into_iter()
                        .map(|t| t.to_string())
                        .collect();
                    for (i, t) in toks.iter().enumerate() {
                        if t.starts_with("Fxs") && toks.get(i + 1).map(String::as_str) == Some(",")
                        {
                            let ptr = format!("{} {} {}", toks[i + 2], toks[i + 3], toks[i + 4]);
                            let ty: Type = syn::parse_str(&ptr).unwrap();
                            let int = "int32_t".to_string();
                            r.structs.insert(
                                snake(t),
                                vec![
                                    (c_type(&ty), "data".into()),
                                    ("uintptr_t".into(), "len".into()),
                                    (int.clone(), "width".into()),
                                    (int.clone(), "height".into()),
                                    (int, "stride".into()),
                                ],
                            );
                        }
                    }
                }
                _ => {}
            }
        }
    }
    r
}

/// `object_storage!(... Name for Obj, tag .., SIZE = (SIZE_32: n, SIZE_64: m));`
fn storage_macro(tokens: &proc_macro2::TokenStream, r: &mut RustSide) {
    let toks: Vec<proc_macro2::TokenTree> = flatten(tokens.clone());
    let s: Vec<String> = toks.iter().map(|t| t.to_string()).collect();
    let at_for = s.iter().position(|t| t == "for").expect("`Name for Obj`");
    let name = snake(&s[at_for - 1]);
    let eq = at_for
        + s[at_for..]
            .iter()
            .position(|t| t == "=")
            .expect("`SIZE = (..)`");
    r.storages.insert(name, s[eq - 1].clone());
    for i in eq..s.len() - 2 {
        if s[i].starts_with("FXS_") && s[i + 1] == ":" {
            r.numbers.insert(s[i].clone(), s[i + 2].parse().unwrap());
        }
    }
}

fn flatten(ts: proc_macro2::TokenStream) -> Vec<proc_macro2::TokenTree> {
    let mut out = Vec::new();
    for t in ts {
        match t {
            proc_macro2::TokenTree::Group(g) => out.extend(flatten(g.stream())),
            t => out.push(t),
        }
    }
    out
}

fn both() -> (Header, RustSide) {
    let dir = crate_dir();
    let h = parse_header(&std::fs::read_to_string(dir.join("include/fixsight.h")).unwrap());
    let r = parse_rust(&dir.join("src"));
    (h, r)
}

#[test]
fn functions_agree() {
    let (h, r) = both();
    assert!(
        r.functions.len() >= 30,
        "found {} functions",
        r.functions.len()
    );
    for (name, sig) in &r.functions {
        let got = h.functions.get(name);
        assert_eq!(got, Some(sig), "header prototype of {name}");
    }
    for name in h.functions.keys() {
        assert!(
            r.functions.contains_key(name),
            "{name} is in the header only"
        );
    }
}

#[test]
fn structs_and_storage_agree() {
    let (h, r) = both();
    for (name, fields) in &r.structs {
        if name.starts_with("fxs_") && !r.storages.contains_key(name) {
            assert_eq!(h.structs.get(name), Some(fields), "fields of {name}");
        }
    }
    for name in h.structs.keys() {
        assert!(
            r.structs.contains_key(name),
            "struct {name} is in the header only"
        );
    }
    assert_eq!(r.storages.len(), 11);
    for (name, size) in &r.storages {
        assert_eq!(h.unions.get(name), Some(size), "storage {name}");
    }
    assert_eq!(h.unions.len(), r.storages.len());
}

#[test]
fn constants_agree() {
    let (h, r) = both();
    for (name, v) in &r.numbers {
        assert_eq!(h.numbers.get(name), Some(v), "#define {name}");
    }
    for name in h.numbers.keys() {
        assert!(
            r.numbers.contains_key(name),
            "{name} is defined in the header only"
        );
    }
    for (code, name, _) in crate::status::STATUSES {
        assert_eq!(h.numbers.get(*name), Some(&(*code as i64)), "{name}");
    }
}

#[test]
fn every_kernel_error_has_a_status_code() {
    let path = crate_dir().join("../kernels/src/error.rs");
    let file = syn::parse_file(&std::fs::read_to_string(path).unwrap()).unwrap();
    let variants: Vec<String> = file
        .items
        .iter()
        .find_map(|i| match i {
            Item::Enum(e) if e.ident == "Error" => {
                Some(e.variants.iter().map(|v| v.ident.to_string()).collect())
            }
            _ => None,
        })
        .expect("enum Error");
    assert!(variants.len() >= 20);
    for v in variants {
        let code = format!("FXS_E_{}", snake(&v).to_uppercase());
        assert!(
            crate::status::STATUSES.iter().any(|(_, n, _)| *n == code),
            "fixsight::Error::{v} has no status code {code}"
        );
    }
}

#[test]
fn storage_sizes_are_the_object_sizes() {
    use crate::boundary::{fits, Stored};
    fn check<T: Stored>() {
        assert!(fits::<T>(), "{}", core::any::type_name::<T>());
    }
    check::<fixsight::filter::SeparableFilter>();
    check::<crate::filter::StreamObj>();
    check::<crate::nms::StreamObj>();
    check::<crate::warp::MapObj>();
    check::<crate::warp::GridObj>();
    check::<crate::warp::GridStreamObj>();
    check::<crate::lines::AccObj>();
    check::<crate::track::TrackerObj>();
    check::<crate::pipeline::StreamObj>();
    check::<crate::point_job::JobObj>();
    check::<crate::image_job::ImageJobObj>();
}

#[test]
fn parser_sees_a_difference() {
    // The checks above are only as good as the parser: a changed parameter
    // type must show.
    let text = std::fs::read_to_string(crate_dir().join("include/fixsight.h")).unwrap();
    let bad = text.replacen(
        "fxs_filter_ring_rows(const fxs_filter *f, int32_t *rows)",
        "fxs_filter_ring_rows(const fxs_filter *f, uint32_t *rows)",
        1,
    );
    assert_ne!(text, bad);
    let (h, r) = (parse_header(&bad), parse_rust(&crate_dir().join("src")));
    assert_ne!(
        h.functions.get("fxs_filter_ring_rows"),
        r.functions.get("fxs_filter_ring_rows")
    );
}
