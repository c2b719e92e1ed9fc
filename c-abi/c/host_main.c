/* Host C test: the golden vectors and the bad-input cases through the C
 * API, linked against the host static library (c-abi/tests/host_c.rs
 * builds and runs it). Exit status 0 only when all pass. */
#include <stdio.h>

#include "fixsight.h"
#include "golden.h"

void golden_platform_write(const char *s) { fputs(s, stdout); }
void golden_platform_begin(void) {}
uint32_t golden_platform_end(void) { return 0; }

fxs_status readme_example(void);

int main(void) {
    int r = golden_run_all("host");
    fxs_status st = readme_example();
    printf("readme example: %s\n", fxs_status_message(st));
    if (st != FXS_OK) r = 1;
    fflush(stdout);
    return r;
}
