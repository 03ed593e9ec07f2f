/* The Rust firmware's demo data, embedded byte for byte: the table images
   and the recorded stream (build.sh passes examples/firmware/data as the
   assembler's include path). Each in its own section, so that a program
   that does not use one links without it (--gc-sections). */

    .section .rodata.sd_image_q, "a"
    .balign 4
    .global sd_image_q
    .global sd_image_q_end
sd_image_q:
    .incbin "well_level_q.bin"
sd_image_q_end:

    .section .rodata.sd_image_f32, "a"
    .balign 4
    .global sd_image_f32
    .global sd_image_f32_end
sd_image_f32:
    .incbin "well_level_f32.bin"
sd_image_f32_end:

    .section .rodata.sd_stream_csv, "a"
    .global sd_stream_csv
sd_stream_csv:
    .incbin "well_level_stream.csv"
    .byte 0

    .section .note.GNU-stack, "", %progbits
