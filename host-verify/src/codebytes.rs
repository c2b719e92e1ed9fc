//! Code bytes per kernel id from one linked firmware image.
//!
//! The firmware is linked with its relocations kept (`--emit-relocs`, set by
//! `targets/memory-x.rs`). From the final ELF this module builds the
//! reference graph of the image: a node per function or data object (ELF
//! symbols with a size; stretches of a section no symbol covers, such as
//! jump tables, become nodes of their own, cut at every address a
//! relocation points to), and an edge from node A to node B for every
//! relocation whose place lies in A and whose target lies in B. That covers
//! direct calls, tail calls, literal-pool and `movw`/`movt` addresses on
//! Arm, `auipc`/`jalr` pairs and `lui`/`addi` addresses on RV32, and
//! pointers stored in data (vtables, the golden-vector table).
//!
//! * **Baseline**: every node reachable from the image's entry point and
//!   from the nodes nothing refers to (the vector table), without entering
//!   a kernel id's dispatch function or the demo sequence's runner
//!   (`fixsight_harness::sequence::run`): the harness code that runs
//!   whatever kernel is dispatched, the same code the `none` image of the
//!   rebuild method holds.
//! * **Code bytes of a kernel id**: the total size of the functions (nodes
//!   in executable sections) reachable from its dispatch function
//!   `fixsight_harness::kernels::<family>::<name>` (kernel id
//!   `<family>.<name>`) that are not in the baseline. A function two kernel
//!   ids share counts for each, as it would in an image holding either one.
//!
//! The target of a relocation is read the way the linker wrote it: on RV32
//! (RELA) symbol value plus addend; on Arm (REL, the addend is no longer in
//! the image) the symbol's address, or for a relocation against a section
//! symbol the place decoded (a word holding the address, or a Thumb
//! `bl`/`b.w`).

use anyhow::{anyhow, bail, Context, Result};
use object::{Object, ObjectSection, ObjectSymbol, RelocationFlags, RelocationTarget};
// ELF symbol types, section flags and Arm relocation codes, as the `object`
// crate names them (`R_ARM_THM_PC22` is the older name of `R_ARM_THM_CALL`,
// the code of `bl`; `R_ARM_THM_JUMP24` is `b.w`); `llvm-readobj -r` prints
// the same codes for the firmware (0x02, 0x0a, 0x1e).
use object::elf::{
    R_ARM_ABS32, R_ARM_THM_JUMP24, R_ARM_THM_PC22 as R_ARM_THM_CALL, SHF_ALLOC, SHF_EXECINSTR,
    STT_FUNC, STT_OBJECT, STT_SECTION,
};
use std::collections::{BTreeMap, BTreeSet};
use std::path::Path;

/// Demangled path (without hash) of the demo sequence's runner, which the
/// rebuild method's code-size images leave out.
pub const SEQUENCE_RUNNER: &str = "fixsight_harness::sequence::run";

/// One function, data object or unnamed stretch of a section.
#[derive(Debug, Clone, PartialEq)]
pub struct Node {
    /// Demangled name (without hash) of the first symbol, or
    /// `<section>+0x<offset>` for an unnamed stretch.
    pub name: String,
    /// Start address.
    pub addr: u64,
    /// Bytes.
    pub size: u64,
    /// In an executable section (counts as code).
    pub code: bool,
}

/// The reference graph of an image.
#[derive(Debug, Clone, Default)]
pub struct Graph {
    /// Nodes, sorted by address, not overlapping.
    pub nodes: Vec<Node>,
    /// `edges[a]`: the nodes `a` refers to.
    pub edges: Vec<Vec<usize>>,
    /// Nodes the walk of the baseline starts from.
    pub roots: Vec<usize>,
    /// Demangled symbol name (without hash) to the nodes holding it.
    pub by_name: BTreeMap<String, Vec<usize>>,
}

/// Every node reachable from `roots` along `edges`, never entering a node
/// for which `blocked` is true (a blocked root is not entered either).
pub fn reach(edges: &[Vec<usize>], roots: &[usize], blocked: impl Fn(usize) -> bool) -> Vec<bool> {
    let mut seen = vec![false; edges.len()];
    let mut stack: Vec<usize> = Vec::new();
    for &r in roots {
        if !blocked(r) && !seen[r] {
            seen[r] = true;
            stack.push(r);
        }
    }
    while let Some(a) = stack.pop() {
        for &b in &edges[a] {
            if !blocked(b) && !seen[b] {
                seen[b] = true;
                stack.push(b);
            }
        }
    }
    seen
}

/// What one kernel id adds: its bytes and the functions they are made of.
#[derive(Debug, Clone, PartialEq)]
pub struct KernelCode {
    /// Total bytes of `functions`.
    pub bytes: u64,
    /// Indices of the nodes counted, in address order.
    pub functions: Vec<usize>,
}

impl Graph {
    /// The baseline: reachable from [`Graph::roots`] without entering any
    /// node of `cut`.
    pub fn baseline(&self, cut: &BTreeSet<usize>) -> Vec<bool> {
        reach(&self.edges, &self.roots, |n| cut.contains(&n))
    }

    /// The code of the function `entry` outside `baseline`: code nodes
    /// reachable from `entry` without entering the baseline.
    pub fn kernel_code(&self, entry: usize, baseline: &[bool]) -> KernelCode {
        let r = reach(&self.edges, &[entry], |n| baseline[n]);
        let functions: Vec<usize> = (0..self.nodes.len())
            .filter(|&n| r[n] && self.nodes[n].code)
            .collect();
        KernelCode {
            bytes: functions.iter().map(|&n| self.nodes[n].size).sum(),
            functions,
        }
    }

    /// Index of the node holding `addr`.
    fn node_at(&self, addr: u64) -> Option<usize> {
        let i = self
            .nodes
            .partition_point(|n| n.addr <= addr)
            .checked_sub(1)?;
        let n = &self.nodes[i];
        (addr < n.addr + n.size.max(1)).then_some(i)
    }
}

/// The demangled path of a symbol without its hash.
fn demangled(name: &str) -> String {
    format!("{:#}", rustc_demangle::demangle(name))
}

/// Target of a Thumb-2 `bl` / `b.w` (encodings T1 and T4, the same
/// immediate layout) at `place` with halfwords `hw1`, `hw2`: ARMv7-M
/// Architecture Reference Manual (Arm, DDI 0403E), the `BL` and `B`
/// instructions (section numbers from memory); checked against
/// `llvm-objdump` in the tests.
pub fn thumb_branch_target(place: u64, hw1: u16, hw2: u16) -> u64 {
    let s = u32::from((hw1 >> 10) & 1);
    let imm10 = u32::from(hw1 & 0x3ff);
    let j1 = u32::from((hw2 >> 13) & 1);
    let j2 = u32::from((hw2 >> 11) & 1);
    let imm11 = u32::from(hw2 & 0x7ff);
    let i1 = !(j1 ^ s) & 1;
    let i2 = !(j2 ^ s) & 1;
    let imm = (s << 24) | (i1 << 23) | (i2 << 22) | (imm10 << 12) | (imm11 << 1);
    // Sign-extend the 25-bit offset.
    let off = ((imm << 7) as i32) >> 7;
    (place as i64 + 4 + i64::from(off)) as u64
}

/// Section facts kept while reading.
struct Sec {
    name: String,
    addr: u64,
    size: u64,
    code: bool,
}

/// One relocation: where it is, where it points.
struct Reloc {
    place: u64,
    target: u64,
}

/// Reads `elf` and builds its reference graph. Fails if the image has no
/// relocations (linked without `--emit-relocs`) or if a relocation's target
/// cannot be read back.
pub fn read_graph(elf: &Path) -> Result<Graph> {
    let data = std::fs::read(elf).with_context(|| format!("reading {}", elf.display()))?;
    let file = object::File::parse(&*data)
        .with_context(|| format!("{}: not an ELF file the reader knows", elf.display()))?;
    let arm = file.architecture() == object::Architecture::Arm;

    let mut secs: BTreeMap<usize, Sec> = BTreeMap::new();
    for s in file.sections() {
        let object::SectionFlags::Elf { sh_flags } = s.flags() else {
            bail!("{}: not an ELF file", elf.display());
        };
        if sh_flags & u64::from(SHF_ALLOC) != 0 && s.size() > 0 {
            secs.insert(
                s.index().0,
                Sec {
                    name: s.name().unwrap_or("?").to_string(),
                    addr: s.address(),
                    size: s.size(),
                    code: sh_flags & u64::from(SHF_EXECINSTR) != 0,
                },
            );
        }
    }
    let code_at = |a: u64| {
        secs.values()
            .any(|s| s.code && (s.addr..s.addr + s.size).contains(&a))
    };
    // Bytes of an allocated section at an address (the place of a
    // relocation).
    let bytes_at = |a: u64, n: u64| -> Result<&[u8]> {
        for s in file.sections() {
            if let Some(d) = s.data_range(a, n)? {
                return Ok(d);
            }
        }
        bail!("{}: no section data at {a:#x}", elf.display())
    };

    // Symbols with a size, as (addr, size, name, code).
    let mut syms: Vec<(u64, u64, String, bool)> = Vec::new();
    let mut marks: Vec<u64> = Vec::new();
    for s in file.symbols() {
        let object::SymbolFlags::Elf { st_info, .. } = s.flags() else {
            continue;
        };
        let Some(si) = s.section_index() else {
            continue;
        };
        let Some(sec) = secs.get(&si.0) else {
            continue;
        };
        let ty = st_info & 0xf;
        let mut addr = s.address();
        if arm && ty == STT_FUNC {
            addr &= !1;
        }
        if (ty == STT_FUNC || ty == STT_OBJECT) && s.size() > 0 {
            syms.push((addr, s.size(), demangled(s.name().unwrap_or("?")), sec.code));
        } else if ty != STT_SECTION {
            marks.push(addr);
        }
    }

    if !syms.iter().any(|s| s.3) {
        bail!(
            "{}: the image has no function symbols (stripped?), so its call graph \
             cannot be built; keep the symbol table (no `strip` in the firmware's \
             release profile), or measure with `--code-bytes rebuild`",
            elf.display()
        );
    }

    // Relocations, with their targets.
    let mut relocs: Vec<Reloc> = Vec::new();
    for s in file.sections() {
        for (place, r) in s.relocations() {
            let RelocationTarget::Symbol(si) = r.target() else {
                continue;
            };
            let RelocationFlags::Elf { r_type } = r.flags() else {
                continue;
            };
            let sym = file
                .symbol_by_index(si)
                .with_context(|| format!("{}: relocation at {place:#x}", elf.display()))?;
            let object::SymbolFlags::Elf { st_info, .. } = sym.flags() else {
                continue;
            };
            let ty = st_info & 0xf;
            let target = if !arm {
                // RELA: symbol value plus addend.
                sym.address().wrapping_add(r.addend() as u64)
            } else if r_type == R_ARM_ABS32 {
                let w = bytes_at(place, 4)?;
                let v = u64::from(u32::from_le_bytes([w[0], w[1], w[2], w[3]]));
                if v & 1 == 1 && code_at(v & !1) {
                    v & !1
                } else {
                    v
                }
            } else if r_type == R_ARM_THM_CALL || r_type == R_ARM_THM_JUMP24 {
                let w = bytes_at(place, 4)?;
                thumb_branch_target(
                    place,
                    u16::from_le_bytes([w[0], w[1]]),
                    u16::from_le_bytes([w[2], w[3]]),
                )
            } else if ty != STT_SECTION {
                let a = sym.address();
                if ty == STT_FUNC {
                    a & !1
                } else {
                    a
                }
            } else {
                bail!(
                    "{}: relocation type {r_type} at {place:#x} refers to a section \
                     symbol and its target cannot be read back from the image; \
                     teach host-verify/src/codebytes.rs to decode that type",
                    elf.display()
                );
            };
            relocs.push(Reloc { place, target });
        }
    }
    if relocs.is_empty() {
        bail!(
            "{}: the image has no relocations, so its call graph cannot be built; \
             link the firmware with `--emit-relocs` (targets/memory-x.rs prints \
             `cargo:rustc-link-arg=--emit-relocs`), or measure with \
             `--code-bytes rebuild`",
            elf.display()
        );
    }

    // Nodes: the symbols (aliases and nested symbols folded into the node
    // that holds them), then the stretches no symbol covers.
    syms.sort_by(|a, b| a.0.cmp(&b.0).then(b.1.cmp(&a.1)));
    let mut g = Graph::default();
    // Symbol names with the start of the node holding them.
    let mut names: Vec<(String, u64)> = Vec::new();
    for (addr, size, name, code) in syms {
        if let Some(last) = g.nodes.last_mut() {
            if addr < last.addr + last.size {
                last.size = last.size.max(addr + size - last.addr);
                names.push((name, last.addr));
                continue;
            }
        }
        names.push((name.clone(), addr));
        g.nodes.push(Node {
            name,
            addr,
            size,
            code,
        });
    }
    let mut cuts: BTreeSet<u64> = relocs.iter().map(|r| r.target).collect();
    cuts.extend(marks);
    let mut gaps: Vec<Node> = Vec::new();
    for s in secs.values() {
        let end = s.addr + s.size;
        let first = g.nodes.partition_point(|n| n.addr + n.size <= s.addr);
        let mut covered: Vec<(u64, u64)> = g.nodes[first..]
            .iter()
            .take_while(|n| n.addr < end)
            .map(|n| (n.addr, n.addr + n.size))
            .collect();
        covered.push((end, end));
        let mut at = s.addr;
        for (a, b) in covered {
            if a > at {
                let mut starts: Vec<u64> = vec![at];
                starts.extend(cuts.range(at + 1..a));
                starts.push(a);
                for w in starts.windows(2) {
                    gaps.push(Node {
                        name: format!("{}+{:#x}", s.name, w[0] - s.addr),
                        addr: w[0],
                        size: w[1] - w[0],
                        code: s.code,
                    });
                }
            }
            at = at.max(b);
        }
    }
    g.nodes.extend(gaps);
    g.nodes.sort_by_key(|n| n.addr);
    for (name, addr) in names {
        if let Some(n) = g.node_at(addr) {
            let v = g.by_name.entry(name).or_default();
            if !v.contains(&n) {
                v.push(n);
            }
        }
    }

    // Edges, and the roots: the entry point and every node no other node
    // refers to.
    g.edges = vec![Vec::new(); g.nodes.len()];
    let mut referred = vec![false; g.nodes.len()];
    for r in &relocs {
        let (Some(a), Some(b)) = (g.node_at(r.place), g.node_at(r.target)) else {
            continue;
        };
        if a != b {
            g.edges[a].push(b);
            referred[b] = true;
        }
    }
    for e in &mut g.edges {
        e.sort_unstable();
        e.dedup();
    }
    let entry = if arm { file.entry() & !1 } else { file.entry() };
    let entry = g.node_at(entry).ok_or_else(|| {
        anyhow!(
            "{}: no function at the entry point {entry:#x}",
            elf.display()
        )
    })?;
    g.roots = std::iter::once(entry)
        .chain((0..g.nodes.len()).filter(|&n| !referred[n]))
        .collect();
    Ok(g)
}

/// The dispatch function of kernel id `<family>.<name>`.
pub fn entry_path(id: &str) -> Result<String> {
    match id.split_once('.') {
        Some((family, name)) if !family.is_empty() && !name.is_empty() && !name.contains('.') => {
            Ok(format!("fixsight_harness::kernels::{family}::{name}"))
        }
        _ => bail!("kernel id `{id}` is not of the form <family>.<name>"),
    }
}

/// The functions (name and bytes) that each of `ids` adds to the image
/// `elf`, whose sum is its code bytes; `all` are every kernel id the image
/// dispatches (their dispatch functions are cut from the baseline).
pub fn measure(
    elf: &Path,
    ids: &[String],
    all: &BTreeSet<String>,
) -> Result<BTreeMap<String, Vec<(String, u64)>>> {
    let g = read_graph(elf)?;
    let find = |path: &str, what: &str| -> Result<usize> {
        match g.by_name.get(path).map(Vec::as_slice) {
            Some([n]) => Ok(*n),
            Some(_) => bail!(
                "{}: {what} `{path}` is more than one function; give it one body",
                elf.display()
            ),
            None => bail!(
                "{}: {what} `{path}` is not a function of the image; it must be its own \
                 function (`#[inline(never)]`, named as in the kernel table of \
                 targets/harness/src/kernels/mod.rs), or measure with `--code-bytes rebuild`",
                elf.display()
            ),
        }
    };
    let mut entries: BTreeMap<&str, usize> = BTreeMap::new();
    for id in all.iter().chain(ids) {
        let n = find(
            &entry_path(id)?,
            &format!("the dispatch function of `{id}`"),
        )?;
        entries.insert(id, n);
    }
    let mut cut: BTreeSet<usize> = entries.values().copied().collect();
    cut.insert(find(SEQUENCE_RUNNER, "the demo sequence's runner")?);
    let base = g.baseline(&cut);
    let mut lists = BTreeMap::new();
    for id in ids {
        let k = g.kernel_code(entries[id.as_str()], &base);
        lists.insert(
            id.clone(),
            k.functions
                .iter()
                .map(|&n| (g.nodes[n].name.clone(), g.nodes[n].size))
                .collect(),
        );
    }
    Ok(lists)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn node(name: &str, addr: u64, size: u64, code: bool) -> Node {
        Node {
            name: name.into(),
            addr,
            size,
            code,
        }
    }

    /// A hand-built image: `reset` (root) runs `main`, which calls `print`
    /// and reads `table`, a data object pointing to the dispatch functions
    /// `ka` and `kb`, and calls `seq` (the demo sequence's runner), which
    /// calls `kb_core`. `ka` calls `shared` and `print` (harness) and
    /// `ka_core`; `kb` calls `shared`, `kb_core` and, through the data
    /// object `kb_vtable`, `kb_fmt`. `shared` calls `ka_core`. `vectors`
    /// (nothing refers to it) points to `reset` and `fault`.
    fn image() -> Graph {
        let names = [
            ("reset", 16, true),      // 0
            ("main", 100, true),      // 1
            ("print", 200, true),     // 2
            ("table", 8, false),      // 3
            ("ka", 30, true),         // 4
            ("kb", 40, true),         // 5
            ("shared", 50, true),     // 6
            ("ka_core", 300, true),   // 7
            ("kb_core", 400, true),   // 8
            ("kb_vtable", 12, false), // 9
            ("kb_fmt", 60, true),     // 10
            ("seq", 70, true),        // 11
            ("vectors", 64, false),   // 12
            ("fault", 20, true),      // 13
        ];
        let mut addr = 0;
        let nodes = names
            .iter()
            .map(|&(n, size, code)| {
                addr += 0x1000;
                node(n, addr, size, code)
            })
            .collect();
        let edges = vec![
            vec![1],        // reset -> main
            vec![2, 3, 11], // main -> print, table, seq
            vec![],
            vec![4, 5],    // table -> ka, kb
            vec![6, 2, 7], // ka -> shared, print, ka_core
            vec![6, 8, 9], // kb -> shared, kb_core, kb_vtable
            vec![7],       // shared -> ka_core
            vec![],
            vec![],
            vec![10], // kb_vtable -> kb_fmt
            vec![],
            vec![8], // seq -> kb_core
            vec![0, 13],
            vec![],
        ];
        Graph {
            nodes,
            edges,
            roots: vec![0, 12],
            by_name: BTreeMap::new(),
        }
    }

    #[test]
    fn reach_stops_at_blocked_nodes() {
        let g = image();
        let all = reach(&g.edges, &[0], |_| false);
        // Everything but `vectors` and `fault`.
        assert_eq!(all.iter().filter(|&&x| x).count(), 12);
        assert!(!all[12] && !all[13]);
        let cut = reach(&g.edges, &[0], |n| n == 3);
        assert!(cut[0] && cut[1] && cut[2] && cut[11] && cut[8]);
        assert!(!cut[3] && !cut[4] && !cut[5] && !cut[6] && !cut[7]);
        // A blocked root is not entered.
        assert!(reach(&g.edges, &[3], |n| n == 3).iter().all(|&x| !x));
    }

    #[test]
    fn kernel_code_is_what_only_the_dispatch_function_reaches() {
        let g = image();
        let cut: BTreeSet<usize> = [4, 5, 11].into_iter().collect();
        let base = g.baseline(&cut);
        let in_base: Vec<usize> = (0..base.len()).filter(|&n| base[n]).collect();
        // reset, main, print, table, vectors, fault.
        assert_eq!(in_base, vec![0, 1, 2, 3, 12, 13]);
        // ka: itself, shared, ka_core (print is the harness's).
        let a = g.kernel_code(4, &base);
        assert_eq!(a.functions, vec![4, 6, 7]);
        assert_eq!(a.bytes, 30 + 50 + 300);
        // kb: itself, shared, ka_core through shared, kb_core (the demo
        // sequence's runner is cut, so kb_core is not the harness's), and
        // kb_fmt through the vtable, whose 12 data bytes are not code.
        let b = g.kernel_code(5, &base);
        assert_eq!(b.functions, vec![5, 6, 7, 8, 10]);
        assert_eq!(b.bytes, 40 + 50 + 300 + 400 + 60);
        // Without cutting the runner, kb_core would count as harness code.
        let cut2: BTreeSet<usize> = [4, 5].into_iter().collect();
        let b2 = g.kernel_code(5, &g.baseline(&cut2));
        assert_eq!(b2.bytes, 40 + 50 + 300 + 60);
    }

    #[test]
    fn node_lookup_covers_each_node_and_nothing_else() {
        let g = Graph {
            nodes: vec![node("a", 0x100, 0x10, true), node("b", 0x120, 4, false)],
            ..Graph::default()
        };
        assert_eq!(g.node_at(0x100), Some(0));
        assert_eq!(g.node_at(0x10f), Some(0));
        assert_eq!(g.node_at(0x110), None);
        assert_eq!(g.node_at(0x123), Some(1));
        assert_eq!(g.node_at(0x124), None);
        assert_eq!(g.node_at(0xff), None);
    }

    #[test]
    fn thumb_branches_decode() {
        // From the Cortex-M4 firmware, checked against llvm-objdump:
        // `400: f001 f8a4 bl 0x154c`, `492: f7ff ffea bl 0x46a`,
        // `4a6: f000 b89f b.w 0x5e8`.
        assert_eq!(thumb_branch_target(0x400, 0xf001, 0xf8a4), 0x154c);
        assert_eq!(thumb_branch_target(0x492, 0xf7ff, 0xffea), 0x46a);
        assert_eq!(thumb_branch_target(0xf58, 0xf7ff, 0xfe58), 0xc0c);
        assert_eq!(thumb_branch_target(0x4a6, 0xf000, 0xb89f), 0x5e8);
    }

    #[test]
    fn entry_paths_follow_the_kernel_table() {
        assert_eq!(
            entry_path("gradient.direction").unwrap(),
            "fixsight_harness::kernels::gradient::direction"
        );
        assert!(entry_path("gradient").is_err());
        assert!(entry_path("a.b.c").is_err());
        assert!(entry_path(".b").is_err());
    }
}
