// Leak-checker suppressions for libraries under PLplot, used when tests run with AddressSanitizer.
// fontconfig and libltdl keep process-lifetime caches; PLplot's cairo driver does not free the
// gradient pattern it creates for plcolorbar/plgradient (cairo_pattern_create_linear). None of
// these allocations come from moonwright code; in builds without sanitizers this is unused.
extern "C" const char* __lsan_default_suppressions();
extern "C" const char* __lsan_default_suppressions() {
    return "leak:libfontconfig.so\n"
           "leak:libltdl.so\n"
           "leak:cairo_pattern_create_linear\n"
           "leak:cairo_pattern_add_color_stop_rgba\n";
}
