/*
 * insn_window: a QEMU TCG plugin that counts the guest instructions executed
 * between the entry of one function and the entry of another.
 *
 * The firmware calls `fixsight_window_open()` right before the code under
 * measurement and `fixsight_window_close()` right after it. The host passes
 * the two entry addresses (from the ELF symbol table) as plugin arguments:
 *
 *   -plugin libinsn_window.so,open=0x1234,close=0x5678 -d plugin -D log.txt
 *
 * Every translated guest instruction gets an inline 64-bit add of 1 to a
 * global counter, so the counter equals the number of guest instructions
 * executed so far (one vCPU; TCG runs the inline op before the instruction).
 * An exec callback on the two marker instructions snapshots the counter; at
 * each `close` the plugin prints
 *
 *   window N insns D
 *
 * where D = counter(close entry) - counter(open entry). D therefore includes
 * a fixed overhead: the body of the open marker, the call sequence into the
 * measured code and back, and the call to the close marker. The firmware
 * measures an empty window first (window 0) and the host subtracts it.
 *
 * Output goes through qemu_plugin_outs, i.e. the QEMU log: it appears only
 * with `-d plugin` (to stderr, or to the file given with -D).
 *
 * QEMU 7.2 ships no plugin header in Debian, so the handful of API entry
 * points used here are declared below; their names match the symbols that
 * `nm -D qemu-system-arm` lists (qemu_plugin_register_vcpu_tb_trans_cb, ...),
 * and the layouts follow plugin API version 1.
 */
#include <inttypes.h>
#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* ---- plugin API declarations (QEMU plugin API version 1) ---- */
typedef uint64_t qemu_plugin_id_t;

typedef struct {
    const char *target_name;
    struct {
        int min;
        int cur;
    } version;
    bool system_emulation;
    union {
        struct {
            int smp_vcpus;
            int max_vcpus;
        } system;
    };
} qemu_info_t;

struct qemu_plugin_tb;
struct qemu_plugin_insn;

enum qemu_plugin_cb_flags {
    QEMU_PLUGIN_CB_NO_REGS,
    QEMU_PLUGIN_CB_R_REGS,
    QEMU_PLUGIN_CB_RW_REGS,
};

enum qemu_plugin_op {
    QEMU_PLUGIN_INLINE_ADD_U64,
};

typedef void (*qemu_plugin_vcpu_udata_cb_t)(unsigned int vcpu_index, void *userdata);
typedef void (*qemu_plugin_vcpu_tb_trans_cb_t)(qemu_plugin_id_t id, struct qemu_plugin_tb *tb);

extern void qemu_plugin_register_vcpu_tb_trans_cb(qemu_plugin_id_t id,
                                                  qemu_plugin_vcpu_tb_trans_cb_t cb);
extern void qemu_plugin_register_vcpu_insn_exec_cb(struct qemu_plugin_insn *insn,
                                                   qemu_plugin_vcpu_udata_cb_t cb,
                                                   enum qemu_plugin_cb_flags flags,
                                                   void *userdata);
extern void qemu_plugin_register_vcpu_insn_exec_inline(struct qemu_plugin_insn *insn,
                                                       enum qemu_plugin_op op, void *ptr,
                                                       uint64_t imm);
extern size_t qemu_plugin_tb_n_insns(const struct qemu_plugin_tb *tb);
extern struct qemu_plugin_insn *qemu_plugin_tb_get_insn(const struct qemu_plugin_tb *tb,
                                                        size_t idx);
extern uint64_t qemu_plugin_insn_vaddr(const struct qemu_plugin_insn *insn);
extern void qemu_plugin_outs(const char *string);

__attribute__((visibility("default"))) int qemu_plugin_version = 1;

/* ---- the counter ---- */
static uint64_t executed;     /* guest instructions executed so far */
static uint64_t opened_at;    /* counter at the last open marker */
static bool window_open;
static uint64_t open_addr, close_addr;
static unsigned windows;

static void on_open(unsigned int vcpu, void *udata)
{
    (void)vcpu;
    (void)udata;
    opened_at = executed;
    window_open = true;
}

static void on_close(unsigned int vcpu, void *udata)
{
    (void)vcpu;
    (void)udata;
    char line[96];
    if (window_open) {
        snprintf(line, sizeof line, "window %u insns %" PRIu64 "\n", windows,
                 executed - opened_at);
    } else {
        snprintf(line, sizeof line, "window %u unopened\n", windows);
    }
    qemu_plugin_outs(line);
    windows++;
    window_open = false;
}

static void on_translate(qemu_plugin_id_t id, struct qemu_plugin_tb *tb)
{
    (void)id;
    size_t n = qemu_plugin_tb_n_insns(tb);
    for (size_t i = 0; i < n; i++) {
        struct qemu_plugin_insn *insn = qemu_plugin_tb_get_insn(tb, i);
        qemu_plugin_register_vcpu_insn_exec_inline(insn, QEMU_PLUGIN_INLINE_ADD_U64,
                                                   &executed, 1);
        uint64_t a = qemu_plugin_insn_vaddr(insn);
        if (a == open_addr) {
            qemu_plugin_register_vcpu_insn_exec_cb(insn, on_open, QEMU_PLUGIN_CB_NO_REGS, NULL);
        } else if (a == close_addr) {
            qemu_plugin_register_vcpu_insn_exec_cb(insn, on_close, QEMU_PLUGIN_CB_NO_REGS, NULL);
        }
    }
}

static bool parse_addr(const char *arg, const char *key, uint64_t *out)
{
    size_t k = strlen(key);
    if (strncmp(arg, key, k) != 0 || arg[k] != '=') {
        return false;
    }
    char *end = NULL;
    unsigned long long v = strtoull(arg + k + 1, &end, 0);
    if (end == arg + k + 1 || *end != '\0') {
        return false;
    }
    /* Thumb symbol values carry the mode in bit 0; instructions are 2-aligned. */
    *out = (uint64_t)v & ~(uint64_t)1;
    return true;
}

__attribute__((visibility("default"))) int qemu_plugin_install(qemu_plugin_id_t id,
                                                               const qemu_info_t *info,
                                                               int argc, char **argv)
{
    bool have_open = false, have_close = false;
    for (int i = 0; i < argc; i++) {
        if (parse_addr(argv[i], "open", &open_addr)) {
            have_open = true;
        } else if (parse_addr(argv[i], "close", &close_addr)) {
            have_close = true;
        } else {
            fprintf(stderr, "insn_window: unknown argument '%s' (want open=ADDR,close=ADDR)\n",
                    argv[i]);
            return -1;
        }
    }
    if (!have_open || !have_close || open_addr == close_addr) {
        fprintf(stderr, "insn_window: need distinct open=ADDR and close=ADDR\n");
        return -1;
    }
    if (info->system_emulation && info->system.smp_vcpus != 1) {
        fprintf(stderr, "insn_window: needs exactly one vCPU, got %d\n",
                info->system.smp_vcpus);
        return -1;
    }
    qemu_plugin_register_vcpu_tb_trans_cb(id, on_translate);
    return 0;
}
