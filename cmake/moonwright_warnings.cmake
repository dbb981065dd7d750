# moonwright_warnings(target): the project's warning set; errors under MOONWRIGHT_CI.
function(moonwright_warnings target)
  target_compile_options(${target} PRIVATE -Wall -Wextra -Wpedantic -Wshadow -Wconversion
                                           -Wno-sign-conversion)
  if(MOONWRIGHT_CI)
    target_compile_options(${target} PRIVATE -Werror)
  endif()
endfunction()
