% problem: Pelletier 55, who killed Aunt Agatha
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: with equality

fof(someone_killed_agatha, axiom,
    ? [X] : (lives(X) & killed(X, agatha))).

fof(residents, axiom,
    lives(agatha) & lives(butler) & lives(charles)).

fof(only_residents, axiom,
    ! [X] : (lives(X) => (X = agatha | X = butler | X = charles))).

fof(killer_hates, axiom,
    ! [X, Y] : (killed(X, Y) => hates(X, Y))).

fof(killer_not_richer, axiom,
    ! [X, Y] : (killed(X, Y) => ~richer(X, Y))).

fof(charles_spares, axiom,
    ! [X] : (hates(agatha, X) => ~hates(charles, X))).

fof(agatha_hates, axiom,
    ! [X] : (X != butler => hates(agatha, X))).

fof(butler_hates_poorer, axiom,
    ! [X] : (~richer(X, agatha) => hates(butler, X))).

fof(butler_hates_too, axiom,
    ! [X] : (hates(agatha, X) => hates(butler, X))).

fof(nobody_hates_all, axiom,
    ! [X] : ? [Y] : ~hates(X, Y)).

fof(agatha_not_butler, axiom,
    agatha != butler).

fof(pel55_goal, conjecture,
    killed(agatha, agatha)).
