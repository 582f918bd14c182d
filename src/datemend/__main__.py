from datemend.cli import main

raise SystemExit(main())
