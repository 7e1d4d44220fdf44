/* The host's vector file in the image's read-only data (replay.c);
 * VECTORS_BIN is its path, given by run.sh. */
    .section .rodata.vectors_bin, "a"
    .balign 4
    .global vectors_bin
vectors_bin:
    .incbin VECTORS_BIN
