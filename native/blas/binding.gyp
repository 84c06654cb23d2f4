{
  "targets": [
    {
      "target_name": "loadline_blas",
      "sources": ["src/loadline_blas.c"],
      "cflags": ["-O2", "-Wall", "-Wextra"],
      "include_dirs": ["/usr/include/x86_64-linux-gnu", "/usr/include/openblas"],
      "libraries": ["-lopenblas"]
    }
  ]
}
