% problem: Pelletier 32
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: monadic

fof(h1, axiom,
    ! [X] : ((f(X) & (g(X) | h(X))) => i(X))).

fof(h2, axiom,
    ! [X] : ((i(X) & h(X)) => j(X))).

fof(h3, axiom,
    ! [X] : (k(X) => h(X))).

fof(pel32_goal, conjecture,
    ! [X] : ((f(X) & k(X)) => j(X))).
