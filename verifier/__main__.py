from verifier.cli.main import main

# The guard keeps worker processes (which import the main module) from running the command again.
if __name__ == "__main__":
    raise SystemExit(main())
