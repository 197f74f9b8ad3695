package control

import (
	"io"
	"path/filepath"

	"teeter/models"
)

// SILMainFile is the name of the program-in-the-loop main WriteSILMain
// writes.
const SILMainFile = "teeter_sil_main.c"

// WriteSILMain writes DIR/teeter_sil_main.c: a C99 main that speaks teeter's
// line protocol for controller programs (sim/sil/PROTOCOL.md) around the
// generated controller module, so that
//
//	cc -std=c99 -O2 DIR/*.c -o DIR/ctl -lm
//
// builds a program for `teeter run --controller-exec DIR/ctl`. It uses only
// the module's API, so it is the same text for every controller.
func WriteSILMain(dir string) error {
	return models.WriteFileAtomic(filepath.Join(dir, SILMainFile), func(w io.Writer) error {
		_, err := io.WriteString(w, silMain)
		return err
	})
}

// silMain answers every problem with an "error" line, which teeter shows,
// and exits; numbers go out with as many digits as teeter_real needs to be
// read back exactly (9 for float, 17 for double).
const silMain = `/* Program-in-the-loop main for the generated controller, written by teeter;
 * do not edit. It speaks teeter's line protocol for controller programs
 * (version 1, sim/sil/PROTOCOL.md in teeter's sources) on its standard input
 * and output. Build and run, in this directory:
 *   cc -std=c99 -O2 *.c -o ctl -lm
 *   teeter run --model ROBOT --controller-exec ./ctl
 * This file is for the desk, not the robot: it uses stdio. */
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "teeter_controller.h"

#define LINE_MAX_BYTES 65536

static char line[LINE_MAX_BYTES];
/* One more than needed: C has no empty arrays. */
static teeter_real inputs[TEETER_NUM_INPUTS + 1];
static teeter_real outputs[TEETER_NUM_OUTPUTS + 1];

/* fail answers "error MESSAGE" and returns 1. */
static int fail(const char *format, ...)
{
    va_list args;
    va_start(args, format);
    fputs("error ", stdout);
    vprintf(format, args);
    fputs("\n", stdout);
    fflush(stdout);
    va_end(args);
    return 1;
}

/* read_line reads one line without its newline; 0 at the end of input. */
static int read_line(void)
{
    size_t n;
    if (fgets(line, sizeof line, stdin) == NULL) {
        return 0;
    }
    n = strlen(line);
    if (n > 0 && line[n - 1] == '\n') {
        line[--n] = '\0';
    }
    if (n > 0 && line[n - 1] == '\r') {
        line[--n] = '\0';
    }
    return 1;
}

/* check_names compares the names after the first word of line with names;
 * a name ends at a space or, in the "in" line, at its ':' before the unit. */
static int check_names(const char *word, const char *const names[], int count)
{
    char *p = line;
    int i;
    size_t len = strlen(word);
    if (strncmp(p, word, len) != 0 || (p[len] != ' ' && p[len] != '\0')) {
        return fail("expected the header line \"%s ...\", got: %s", word, line);
    }
    p += len;
    for (i = 0; i < count; i++) {
        size_t n;
        if (*p != ' ') {
            return fail("the robot has fewer names in its \"%s\" line than this controller's %d", word, count);
        }
        p++;
        n = strcspn(p, " :");
        if (strlen(names[i]) != n || strncmp(p, names[i], n) != 0) {
            return fail("this controller was generated for another robot: its %s %d is %s", word, i + 1, names[i]);
        }
        p += n;
        p += strcspn(p, " ");
    }
    if (*p != '\0') {
        return fail("the robot has more names in its \"%s\" line than this controller's %d", word, count);
    }
    return 0;
}

static int read_header(void)
{
    int version, n_in, n_out;
    double rate;
    if (!read_line() || sscanf(line, "teeter-sil %d %lf %d %d", &version, &rate, &n_in, &n_out) != 4) {
        return fail("expected a teeter-sil header, got: %s", line);
    }
    if (version != 1) {
        return fail("this program speaks protocol version 1, teeter sent: %s", line);
    }
    if (n_in != TEETER_NUM_INPUTS || n_out != TEETER_NUM_OUTPUTS) {
        return fail("this controller was generated for a robot with %d sensor channels and %d actuators, this one has %d and %d",
                    TEETER_NUM_INPUTS, TEETER_NUM_OUTPUTS, n_in, n_out);
    }
    /* The discrete-time equations hold at the rate they were generated for. */
    if (fabs(rate - TEETER_RATE_HZ) > 1e-9 * TEETER_RATE_HZ) {
        return fail("this controller runs at %.17g Hz, teeter ticks it at %.17g Hz", (double)TEETER_RATE_HZ, rate);
    }
    if (!read_line() || check_names("in", teeter_input_names, TEETER_NUM_INPUTS) != 0) {
        return 1;
    }
    if (!read_line() || check_names("out", teeter_output_names, TEETER_NUM_OUTPUTS) != 0) {
        return 1;
    }
    return 0;
}

/* split_word ends the word at p with '\0' and returns what follows it. */
static char *split_word(char *p)
{
    p += strcspn(p, " ");
    if (*p == ' ') {
        *p++ = '\0';
    }
    return p;
}

static int request(char *p)
{
    char *event = split_word(p);
    if (teeter_request(p, event) != 0) {
        return fail("no sequencer block %s with an event %s", p, event);
    }
    return 0;
}

static int set_param(char *p)
{
    char *value = split_word(p);
    char *end;
    double v = strtod(value, &end);
    int index = teeter_param_index(p);
    if (index < 0) {
        return fail("no parameter %s", p);
    }
    if (end == value || *end != '\0' || teeter_set_param(index, (teeter_real)v) != 0) {
        return fail("parameter %s does not take %s", p, value);
    }
    return 0;
}

static int tick(char *p)
{
    const int digits = sizeof(teeter_real) == sizeof(float) ? 9 : 17;
    char *end;
    double now = strtod(p, &end);
    int i;
    if (end == p) {
        return fail("no time in the tick line: %s", line);
    }
    for (i = 0; i < TEETER_NUM_INPUTS; i++) {
        p = end;
        inputs[i] = (teeter_real)strtod(p, &end);
        if (end == p) {
            return fail("%d readings in the tick line, want %d", i, TEETER_NUM_INPUTS);
        }
    }
    if (*end != '\0') {
        return fail("more than %d readings in the tick line", TEETER_NUM_INPUTS);
    }
    teeter_tick(now, inputs, outputs);
    fputs("c", stdout);
    for (i = 0; i < TEETER_NUM_OUTPUTS; i++) {
        printf(" %.*g", digits, (double)outputs[i]);
    }
    fputs("\n", stdout);
    fflush(stdout);
    return 0;
}

int main(void)
{
    teeter_init();
    if (read_header() != 0) {
        return 1;
    }
    printf("ready\n");
    fflush(stdout);
    while (read_line()) {
        int bad;
        if (strncmp(line, "t ", 2) == 0) {
            bad = tick(line + 2);
        } else if (strncmp(line, "e ", 2) == 0) {
            bad = request(line + 2);
        } else if (strncmp(line, "p ", 2) == 0) {
            bad = set_param(line + 2);
        } else {
            bad = fail("a line this program does not know: %s", line);
        }
        if (bad) {
            return 1;
        }
    }
    return 0;
}
`
