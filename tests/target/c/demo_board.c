/* The demo board's configuration (see demo_board.h). */
#include "demo_board.h"

/* Everything but the law and the DC correction. */
#define DEMO_BOARD(DC_CORRECTION, ...)                                         \
    {                                                                          \
        .clock_hz = 64000000u,                                                 \
        /* 10 k over 4.7 k; 100 k over 9.1 k (40 V full scale). */             \
        .output_adc = {.adc_bits = 12, .adc_reference_v = 3.3f,               \
                       .divider_ratio = 0.319728f, .adc_offset_v = 0.0f},      \
        .input_adc = {.adc_bits = 12, .adc_reference_v = 3.3f,                \
                      .divider_ratio = 0.0826f, .adc_offset_v = 0.0f},         \
        .setpoint_v = 5.0f,                                                    \
        .sensing = RIPPLECTL_SENSING_SAMPLED,                                  \
        .law = __VA_ARGS__,                                                    \
        /* 20 kHz (above the audible band) to 140 kHz (below the 150 kHz  \
         * where CISPR 32's conducted limits begin). */                        \
        .window = {.f_min_hz = 20000.0f, .f_max_hz = 140000.0f,               \
                   .min_on_s = 150e-9f, .min_off_s = 3e-6f,                     \
                   .max_on_s = 40e-6f,                                         \
                   .light_load = RIPPLECTL_LIGHT_LOAD_SMALLER_PULSES},         \
        /* 47 uH with 30 mOhm DCR, 60 mOhm switch plus 50 mOhm of wiring, a \
         * Schottky diode (0.45 V, 30 mOhm). */                                \
        .model = {.l_h = 47e-6f, .r_on_ohm = 0.11f, .dcr_ohm = 0.03f,         \
                  .diode_vf_v = 0.45f, .diode_rd_ohm = 0.03f},                 \
        .protection = {.uvlo_on_v = 16.0f, .uvlo_off_v = 15.0f,               \
                       .vin_max_v = 36.0f, .vin_max_hysteresis_v = 1.0f,       \
                       .ovp_v = 5.5f, .current_limit_a = 4.0f,                 \
                       .short_cycles = 8, .hiccup_s = 2e-3f,                   \
                       .soft_start_s = 1.5e-3f, .stuck_low_v = 0.3f,             \
                       .stuck_implied_v = 2.0f, .stuck_cycles = 3,             \
                       .max_retries = 3},                                      \
        /* 220 uF with 40 mOhm ESR; a MnZn ferrite drum core (Steinmetz     \
         * coefficients typical of the material, from memory). */             \
        .slow = {.housekeeping_hz = 5000.0f,  .observer_bandwidth_hz = 1000.0f, \
                 .output_capacitance_f = 220e-6f,                              \
                 .dc_correction = (DC_CORRECTION), .esr_ohm = 0.040f,          \
                 .t_rise_s = 20e-9f, .t_fall_s = 20e-9f,                       \
                 .gate_charge_c = 10e-9f, .gate_drive_v = 10.0f,               \
                 .core = {.k = 4.0f, .alpha = 1.4f, .beta = 2.6f,              \
                          .turns = 20.0f, .area_m2 = 20e-6f,                   \
                          .volume_m3 = 1.5e-6f}},                              \
    }

const ripplectl_config DEMO_HYSTERETIC = DEMO_BOARD(
    false, {.kind = RIPPLECTL_LAW_HYSTERETIC, .band_v = 0.040f});

const ripplectl_config DEMO_ON_TIME = DEMO_BOARD(
    true, {.kind = RIPPLECTL_LAW_ON_TIME, .on_time_s = 2.08e-6f,
           .feed_forward_hz = 100e3f, .trim_gain = 0.05f, .trim_min = 0.5f,
           .trim_max = 1.5f});
