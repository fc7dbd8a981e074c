/** Process exit codes (design contract): 0 success, 1 runtime failure, 2 bad input. */
export const EXIT_OK = 0;
export const EXIT_RUNTIME = 1;
export const EXIT_BAD_INPUT = 2;
