"""What a user runs: synthesize (the pipeline), compare, convert, sweep and project builds,
with the build options, atomic output files and worker pools they share."""
