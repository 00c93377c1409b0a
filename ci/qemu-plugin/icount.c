/*
 * Exact instruction counts between two marker functions, as a QEMU TCG
 * plugin (plugin API version 1, QEMU 7.2). Debian ships no plugin header,
 * so the handful of declarations used are written out below from the
 * documented API.
 *
 * Arguments: start=ADDR, stop=ADDR (hex, the markers' symbol addresses; the
 * Thumb bit is ignored), out=PATH. Every execution of the start marker's
 * first instruction opens a region; the first instruction of the stop marker
 * closes it and appends one line "region N: COUNT" to PATH. COUNT includes
 * the start marker's body and the call/return overhead, which the caller
 * removes by subtracting an empty region.
 *
 * Optional profile=PATH: per-address counts inside regions ("ADDR COUNT" lines,
 * written at exit), for finding where the instructions go; with only=N, only
 * inside region N (ci/profile.sh uses this for a per-function breakdown).
 *
 * Build: gcc -O2 -shared -fPIC -o libicount.so icount.c
 */
#include <inttypes.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

typedef uint64_t qemu_plugin_id_t;
typedef struct qemu_info_t qemu_info_t;
struct qemu_plugin_tb;
struct qemu_plugin_insn;
enum qemu_plugin_cb_flags {
    QEMU_PLUGIN_CB_NO_REGS,
    QEMU_PLUGIN_CB_R_REGS,
    QEMU_PLUGIN_CB_RW_REGS,
};
typedef void (*vcpu_udata_cb)(unsigned int vcpu_index, void *userdata);
typedef void (*tb_trans_cb)(qemu_plugin_id_t id, struct qemu_plugin_tb *tb);
typedef void (*udata_cb)(qemu_plugin_id_t id, void *userdata);

void qemu_plugin_register_vcpu_tb_trans_cb(qemu_plugin_id_t id, tb_trans_cb cb);
size_t qemu_plugin_tb_n_insns(const struct qemu_plugin_tb *tb);
struct qemu_plugin_insn *qemu_plugin_tb_get_insn(const struct qemu_plugin_tb *tb,
                                                 size_t idx);
uint64_t qemu_plugin_insn_vaddr(const struct qemu_plugin_insn *insn);
void qemu_plugin_register_vcpu_insn_exec_cb(struct qemu_plugin_insn *insn,
                                            vcpu_udata_cb cb,
                                            enum qemu_plugin_cb_flags flags,
                                            void *userdata);
void qemu_plugin_register_atexit_cb(qemu_plugin_id_t id, udata_cb cb,
                                    void *userdata);

__attribute__((visibility("default"))) int qemu_plugin_version = 1;

static uint64_t start_addr, stop_addr;
static FILE *out;
static int counting;
static uint64_t count;
static unsigned region;
#define PROFILE_SPAN (1u << 22) /* addresses 0 .. 4 MiB, halfword steps */
static uint64_t *profile;
static const char *profile_path;
static long only_region = -1;

static void on_insn(unsigned int vcpu, void *u)
{
    (void)vcpu;
    count += counting;
    if (profile && counting && (only_region < 0 || (long)region == only_region)) {
        profile[(uintptr_t)u]++;
    }
}

static void on_start(unsigned int vcpu, void *u)
{
    (void)vcpu;
    (void)u;
    counting = 1;
    count = 1;
}

static void on_stop(unsigned int vcpu, void *u)
{
    (void)vcpu;
    (void)u;
    if (counting) {
        fprintf(out, "region %u: %" PRIu64 "\n", region++, count);
        fflush(out);
    }
    counting = 0;
}

static void on_trans(qemu_plugin_id_t id, struct qemu_plugin_tb *tb)
{
    (void)id;
    size_t n = qemu_plugin_tb_n_insns(tb);
    for (size_t i = 0; i < n; i++) {
        struct qemu_plugin_insn *insn = qemu_plugin_tb_get_insn(tb, i);
        uint64_t a = qemu_plugin_insn_vaddr(insn);
        vcpu_udata_cb cb = a == start_addr ? on_start
                         : a == stop_addr  ? on_stop
                                           : on_insn;
        void *slot = (void *)(uintptr_t)(a < PROFILE_SPAN ? a / 2 : 0);
        qemu_plugin_register_vcpu_insn_exec_cb(insn, cb, QEMU_PLUGIN_CB_NO_REGS, slot);
    }
}

static void on_atexit(qemu_plugin_id_t id, void *u)
{
    (void)id;
    (void)u;
    if (profile && profile_path) {
        FILE *f = fopen(profile_path, "w");
        for (uint64_t i = 0; f && i < PROFILE_SPAN / 2; i++) {
            if (profile[i]) {
                fprintf(f, "%" PRIx64 " %" PRIu64 "\n", i * 2, profile[i]);
            }
        }
        if (f) {
            fclose(f);
        }
    }
    if (out) {
        fclose(out);
        out = NULL;
    }
}

__attribute__((visibility("default"))) int
qemu_plugin_install(qemu_plugin_id_t id, const qemu_info_t *info, int argc, char **argv)
{
    (void)info;
    const char *path = NULL;
    for (int i = 0; i < argc; i++) {
        if (strncmp(argv[i], "start=", 6) == 0) {
            start_addr = strtoull(argv[i] + 6, NULL, 16) & ~(uint64_t)1;
        } else if (strncmp(argv[i], "stop=", 5) == 0) {
            stop_addr = strtoull(argv[i] + 5, NULL, 16) & ~(uint64_t)1;
        } else if (strncmp(argv[i], "profile=", 8) == 0) {
            profile_path = argv[i] + 8;
            profile = calloc(PROFILE_SPAN / 2, sizeof *profile);
        } else if (strncmp(argv[i], "only=", 5) == 0) {
            only_region = strtol(argv[i] + 5, NULL, 10);
        } else if (strncmp(argv[i], "out=", 4) == 0) {
            path = argv[i] + 4;
        }
    }
    if (!start_addr || !stop_addr || !path || start_addr == stop_addr) {
        fprintf(stderr, "icount: need start=ADDR,stop=ADDR,out=PATH\n");
        return -1;
    }
    out = fopen(path, "w");
    if (!out) {
        perror(path);
        return -1;
    }
    qemu_plugin_register_vcpu_tb_trans_cb(id, on_trans);
    qemu_plugin_register_atexit_cb(id, on_atexit, NULL);
    return 0;
}
