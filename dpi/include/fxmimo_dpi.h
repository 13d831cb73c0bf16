/* fxmimo_dpi.h: the fxmimo bit-true model behind a small C ABI, for SystemVerilog benches
 * (DPI-C, IEEE 1800-2017 clause 35) and any other C caller. Every type maps onto a DPI type:
 * const char* = string, int64_t = longint, int = int, void* = chandle, pointers = output args.
 *
 * Formats are Q text ("Q1.14", "UQ0.16"), rounding and overflow modes the model's names
 * ("half_even", "saturate_symmetric"; README "How it computes"). Words are integers in the
 * format: a signed word is sign-extended (-1 is -1), an unsigned one zero-extended.
 * A call that fails returns -1 (or NULL) and leaves its message in fxm_last_error().
 */
#ifndef FXMIMO_DPI_H
#define FXMIMO_DPI_H

#include <stdint.h>

#if defined(FXMIMO_DPI_BUILD)
#define FXM_API __attribute__((visibility("default")))
#else
#define FXM_API
#endif

#ifdef __cplusplus
extern "C" {
#endif

/* The message of the calling thread's last failed call ("" when none failed). */
FXM_API const char* fxm_last_error(void);

/* Brings `word` of `from_format` into `to_format` by rounding then overflow handling, exactly
 * as the model does. Returns 1 when the value overflowed (the result is then the overflow
 * mode's word), 0 when it did not, -1 on bad arguments. */
FXM_API int fxm_requantize(const char* from_format, int64_t word, const char* to_format, const char* rounding,
                           const char* overflow, int64_t* result);

/* The same for `count` words; returns how many overflowed, or -1. */
FXM_API int64_t fxm_requantize_array(const char* from_format, const int64_t* words, const char* to_format,
                                     const char* rounding, const char* overflow, int64_t* results, int64_t count);

/* Loads a scenario file and runs its golden model and bit-true datapath for one trial; the
 * handle holds every node's words and a mismatch count per node. NULL on error. */
FXM_API void* fxm_model_open(const char* scenario_path, int64_t trial);
FXM_API void fxm_model_close(void* model);

/* A node's shape (rows x cols; a vector node has cols = 1), whether it is complex (1) or real
 * (0), and its format: word bits, fraction bits, signed (1) or unsigned (0). Returns 0 or -1
 * (an unknown node, or one this scenario's datapath does not have). */
FXM_API int fxm_node_shape(void* model, const char* node, int* rows, int* cols, int* is_complex);
FXM_API int fxm_node_format(void* model, const char* node, int* word_bits, int* frac_bits, int* is_signed);

/* The word at (row, col) of a node; part 0 is the real part (or the word of a real node), 1 the
 * imaginary part. Returns 0 or -1. */
FXM_API int fxm_node_word(void* model, const char* node, int part, int row, int col, int64_t* word);

/* Compares a DUT word with the model's word at (row, col): 1 equal, 0 different (counted, and
 * the first difference kept), -1 on bad arguments. The DUT word may be given sign-extended or
 * as its raw W-bit pattern: only its W low bits are compared. */
FXM_API int fxm_check_word(void* model, const char* node, int part, int row, int col, int64_t dut_word);

/* Words compared and found different for a node so far. -1 for an unknown node. */
FXM_API int64_t fxm_checked(void* model, const char* node);
FXM_API int64_t fxm_mismatches(void* model, const char* node);

/* The first difference of a node, e.g. "dac[antenna=2, symbol=5].re: expected 0x1f3 (-13),
 * got 0x1f2 (-14)", or "" when none. Valid until the next call on the handle. */
FXM_API const char* fxm_first_mismatch(void* model, const char* node);

#ifdef __cplusplus
}
#endif

#endif /* FXMIMO_DPI_H */
