{
  "targets": [
    {
      "target_name": "airshade_memory",
      "sources": ["memory.c"],
      "cflags": ["-O2", "-Wall", "-Wextra"]
    }
  ]
}
