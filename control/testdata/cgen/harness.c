/* Test harness for the generated controller module: reads commands from
 * standard input, one a line, and answers each on standard output, so that
 * a Go test can drive the C and the Go graph with the same script.
 *
 *   t NOW V1 ... VN      tick; answers "c U1 ... UM"
 *   p INDEX VALUE        teeter_set_param; answers "r RESULT"
 *   e BLOCK EVENT        teeter_request; answers "r RESULT"
 *   x PATH               teeter_param_index; answers "r INDEX"
 *   g INDEX              teeter_get_param; answers "v VALUE"
 *   i                    teeter_init; answers "r 0"
 *   n                    answers "n" and one line per input (name unit),
 *                        output and parameter path
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "teeter_controller.h"

static char line[1 << 16];

static double next_number(char **p)
{
    char *end;
    double x = strtod(*p, &end);
    if (end == *p) {
        fprintf(stderr, "harness: a number is missing in: %s\n", line);
        exit(2);
    }
    *p = end;
    return x;
}

int main(void)
{
    teeter_real in[TEETER_NUM_INPUTS + 1], out[TEETER_NUM_OUTPUTS + 1];
    int i;
    teeter_init();
    while (fgets(line, sizeof line, stdin) != NULL) {
        char *p = line + 1;
        line[strcspn(line, "\n")] = '\0';
        switch (line[0]) {
        case 't': {
            double now = next_number(&p);
            for (i = 0; i < TEETER_NUM_INPUTS; ++i)
                in[i] = (teeter_real)next_number(&p);
            teeter_tick(now, in, out);
            putchar('c');
            for (i = 0; i < TEETER_NUM_OUTPUTS; ++i)
                printf(" %.17g", (double)out[i]);
            putchar('\n');
            break;
        }
        case 'p': {
            int index = (int)next_number(&p);
            double v = next_number(&p);
            printf("r %d\n", teeter_set_param(index, (teeter_real)v));
            break;
        }
        case 'e': {
            char block[256], event[256];
            if (sscanf(line + 2, "%255s %255s", block, event) != 2)
                return 2;
            printf("r %d\n", teeter_request(block, event));
            break;
        }
        case 'x':
            printf("r %d\n", teeter_param_index(line + 2));
            break;
        case 'g':
            printf("v %.17g\n", (double)teeter_get_param((int)next_number(&p)));
            break;
        case 'i':
            teeter_init();
            printf("r 0\n");
            break;
        case 'n':
            printf("n\n");
            for (i = 0; i < TEETER_NUM_INPUTS; ++i)
                printf("%s %s\n", teeter_input_names[i], teeter_input_units[i]);
            for (i = 0; i < TEETER_NUM_OUTPUTS; ++i)
                printf("%s\n", teeter_output_names[i]);
            for (i = 0; i < TEETER_NUM_PARAMS; ++i)
                printf("%s\n", teeter_param_paths[i]);
            break;
        default:
            fprintf(stderr, "harness: unknown command: %s\n", line);
            return 2;
        }
    }
    return 0;
}
