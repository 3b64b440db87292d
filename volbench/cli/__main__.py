from volbench.cli import main

raise SystemExit(main())
