/* Linked in place of ripplectl_init (-Wl,--wrap=ripplectl_init) to measure
 * the library without its start-up configuration: what the entry points,
 * telemetry and fault log cost alone (run.sh's `c_runtime`). Never run. */
#include "ripplectl.h"

ripplectl_error __wrap_ripplectl_init(struct ripplectl *state, const struct ripplectl_config *config,
                                      const struct ripplectl_board *board,
                                      struct ripplectl_config_error *error)
{
    (void)state;
    (void)config;
    (void)board;
    (void)error;
    return RIPPLECTL_ERROR_OTHER;
}
