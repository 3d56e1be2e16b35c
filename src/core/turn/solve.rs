//! `solve`: the solve of one operator turn — ground the constraints, build the energy, solve, describe.
//!
//! Owns: `SolveRequest`, `Correction`, the safety hold (a second solve that keeps safety-critical labels
//! and objects unless the operator confirmed) and the baseline solve when there is no previous turn.
//! Must not: parse utterances or touch files; constraints arrive typed, results leave as plain values.

use serde::{Deserialize, Serialize};

use crate::energy::build::{
    build_constraint_part, build_energy, EnergyInputs, EnergyWeights, RoomClassPrior,
};
use crate::energy::{
    count_violation, EnergyError, JointEnergy, JointState, TupleFactor, UnaryFactor, HARD_WEIGHT,
};
use crate::grounding::{
    ground, how_many, relation_holds, where_question, ClarifyingQuestion, GroundedConstraint,
    GroundedKind, GroundingContext, GroundingIssue, SceneView, Target,
};
use crate::hypotheses::{
    build_hypotheses, propose_named, propose_related, Detection, Hypothesis, HypothesisError,
    ProposalOptions, RelatedAsk,
};
use crate::ids::ClassId;
use crate::language::constraint::{Constraint, ConstraintKind, Count, Relation};
use crate::scene::Scene;
use crate::scenegraph::capped::{surplus_factors, surplus_question, Cap};
use crate::scenegraph::changes::{
    list_changes, unmet_constraints, Change, ChangeKind, ChangeStatus, ConstraintLabels, Unmet,
};
use crate::scenegraph::instances::InstanceCuts;
use crate::scenegraph::leftovers::leftover_factors;
use crate::scenegraph::locality::{overreach_factors, stray_factors, Concern};
use crate::scenegraph::supersede::retire_superseded;
use crate::scenegraph::{build_scene_graph, SceneGraph, SolvedFigures};
pub use crate::solver::joint::BoundMemo;
use crate::solver::joint::{
    solve_joint_loose, tighten_bound_reusing, JointError, JointOptions, JointSolution, WarmStart,
};
use crate::solver::joint_region::{touched_by_constraints, touched_nodes};
use crate::taxonomy::{ClassGroup, Taxonomy};
use crate::turn::region::{factor_segments, solve_step};
use crate::unaries::Unaries;

/// What can stop a correction.
#[derive(Debug, thiserror::Error)]
pub enum CorrectionError {
    #[error("hypotheses: {0}")]
    Hypotheses(#[from] HypothesisError),
    #[error("energy: {0}")]
    Energy(#[from] EnergyError),
    #[error("solver: {0}")]
    Solver(#[from] JointError),
}

/// One turn's inputs.
pub struct SolveRequest<'a> {
    pub scene: &'a Scene,
    pub unaries: &'a Unaries,
    pub taxonomy: &'a Taxonomy,
    pub detections: &'a [Detection],
    /// The previous turn on this scene, if any: its state is the "before" and the warm start.
    pub previous: Option<&'a Correction>,
    pub constraints: &'a [Constraint],
    pub context: &'a GroundingContext,
    /// Apply changes that remove or rename a safety-critical class.
    pub confirm_safety: bool,
    pub prior: &'a RoomClassPrior,
    pub weights: &'a EnergyWeights,
    pub proposals: &'a ProposalOptions,
    pub options: &'a JointOptions,
    /// Where a patch of a class holds several objects (`crate::scenegraph::instances`).
    pub instance_cuts: &'a InstanceCuts,
}

/// One turn's result.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Correction {
    pub graph: SceneGraph,
    pub changes: Vec<Change>,
    pub unmet: Vec<Unmet>,
    pub questions: Vec<ClarifyingQuestion>,
    pub issues: Vec<GroundingIssue>,
    pub hypotheses: Vec<Hypothesis>,
    pub solution: JointSolution,
    /// The referent a following "it" means.
    pub last_referent: Option<Target>,
    /// Every constraint in force after this turn (earlier turns first), grounded.
    pub grounded: Vec<GroundedConstraint>,
    /// Span and gloss of every constraint in force, by the index causes and unmet entries use.
    pub constraint_labels: ConstraintLabels,
    /// The last bound tightening's result, which the next turn reuses when its own has the same inputs
    /// (`tighten_bound_reusing`). A cache held in memory only: never stored, never compared.
    #[serde(skip)]
    pub bound_memo: Option<BoundMemo>,
}

/// Where a later solve of the turn starts: the last solution's state, and its multipliers when only a region
/// is solved (they give the rest of the scene its share of the bound; a whole solve starts its dual afresh).
fn step_start(solution: &JointSolution, options: &JointOptions) -> WarmStart {
    WarmStart {
        state: solution.state.clone(),
        multipliers: options.region_solve.then(|| solution.multipliers.clone()),
    }
}

/// The previous state re-indexed onto a new hypothesis list (matching by id).
fn carry_state(
    previous: &Correction,
    hypotheses: &[Hypothesis],
    node_count: usize,
) -> Option<JointState> {
    let state = &previous.solution.state;
    if state.labels.len() != node_count {
        return None;
    }
    let on: Vec<bool> = hypotheses
        .iter()
        .map(|h| {
            previous
                .hypotheses
                .iter()
                .position(|p| p.id == h.id)
                .and_then(|index| state.hypotheses_on.get(index).copied())
                .unwrap_or(false)
        })
        .collect();
    Some(JointState {
        labels: state.labels.clone(),
        hypotheses_on: on,
        room: state.room,
    })
}

/// Runs one turn.
pub fn correct(request: &SolveRequest) -> Result<Correction, CorrectionError> {
    let scene = request.scene;
    let taxonomy = request.taxonomy;
    // A later turn keeps the earlier turn's hypothesis list (the same scene gives the same list, plus any
    // hypotheses earlier relabels added), so the constraints still in force keep pointing at the right ones.
    let mut hypotheses = match request.previous {
        Some(previous) => previous.hypotheses.clone(),
        None => build_hypotheses(
            scene,
            request.unaries,
            request.detections,
            request.proposals,
        )?,
    };
    // The "before": the previous turn, or the scene solved with no constraints.
    let (before_state, before_hypotheses, warm) = match request.previous {
        Some(previous) => {
            let node_count = scene.segment_count() + scene.coarse.members.len();
            match carry_state(previous, &hypotheses, node_count) {
                Some(state) => (
                    previous.solution.state.clone(),
                    previous.hypotheses.clone(),
                    Some(WarmStart {
                        state,
                        multipliers: Some(previous.solution.multipliers.clone()),
                    }),
                ),
                None => baseline(
                    &energy_inputs(request, &hypotheses, &[], &[]),
                    request.options,
                )?,
            }
        }
        None => baseline(
            &energy_inputs(request, &hypotheses, &[], &[]),
            request.options,
        )?,
    };

    // Classes this turn names get groups over a wider top-k where none of their hypotheses reaches, after
    // the "before" is settled (appended, so the warm start's flags keep their positions and start off).
    let named = named_classes(request.constraints);
    let extra = propose_named(
        scene,
        request.unaries,
        &hypotheses,
        &named,
        request.proposals,
    );
    hypotheses.extend(extra);
    // Where the operator placed an object ("a laptop on the desk"), what the robot shows touching the
    // landmark may be that object under another name.
    let placed = placements(request.constraints);
    if !placed.is_empty() {
        let fine = scene.segment_count().min(before_state.labels.len());
        let may_take = |label: u16| {
            taxonomy
                .class(ClassId(label))
                .is_some_and(|c| !matches!(c.group, ClassGroup::Structure | ClassGroup::Living))
        };
        let extra = propose_related(
            scene,
            request.unaries,
            &before_state.labels[..fine],
            &hypotheses,
            &placed.iter().map(|p| p.0).collect::<Vec<_>>(),
            may_take,
            |ask, patch, landmark| relation_holds(scene, placed[ask].1, patch, &[landmark]),
        );
        hypotheses.extend(extra);
    }

    let accepted: Vec<bool> = hypotheses
        .iter()
        .map(|h| {
            before_hypotheses
                .iter()
                .position(|p| p.id == h.id)
                .and_then(|index| before_state.hypotheses_on.get(index).copied())
                .unwrap_or(false)
        })
        .collect();
    let view = SceneView {
        scene,
        taxonomy,
        hypotheses: &hypotheses,
        accepted: &accepted,
        class_count: request.unaries.class_count(),
    };
    let grounding = ground(request.constraints, &view, request.context);
    // Earlier turns' constraints stay in force; this turn's are numbered after them.
    let (mut in_force, mut labels): (Vec<GroundedConstraint>, ConstraintLabels) =
        match request.previous {
            Some(previous) => (
                previous.grounded.clone(),
                previous.constraint_labels.clone(),
            ),
            None => (Vec::new(), Vec::new()),
        };
    let offset = labels.len();
    labels.extend(
        request
            .constraints
            .iter()
            .map(|c| (c.span, c.gloss.clone())),
    );
    let newer: Vec<GroundedConstraint> = grounding
        .constraints
        .iter()
        .cloned()
        .map(|mut grounded| {
            grounded.constraint += offset;
            grounded
        })
        .collect();
    // A later statement about the same thing replaces the earlier one ("no, it's a towel").
    retire_superseded(&mut in_force, &newer);
    in_force.extend(newer);
    // A change no factor mentions is credited to this turn's constraints in force, else to every one in force.
    let mut fallback: Vec<usize> = in_force
        .iter()
        .map(|grounded| grounded.constraint)
        .filter(|&constraint| constraint >= offset)
        .collect();
    if fallback.is_empty() {
        fallback = in_force
            .iter()
            .map(|grounded| grounded.constraint)
            .collect();
    }

    let mut built = build_energy(&energy_inputs(request, &hypotheses, &accepted, &in_force))?;
    // What this turn's constraints change: the energy with the constraints in force before it, over the
    // same hypotheses, against this one, read with the warm start's labels (`region::solve_step`).
    let seeds = match (&warm, request.options.region_solve) {
        (Some(start), true) => {
            let before_in_force = request.previous.map_or(&[][..], |p| &p.grounded[..]);
            // Only the constraint part: the segment part is this turn's, built once above.
            let before = build_constraint_part(&energy_inputs(
                request,
                &hypotheses,
                &accepted,
                before_in_force,
            ))?;
            touched_by_constraints(&before.energy, &built.energy, &start.state.labels)
        }
        _ => None,
    };
    let mut solution = solve_step(&built.energy, warm.as_ref(), seeds.clone(), request.options)?;
    // The scene graph of `solution` with the counts and caps in force, while both stand: a turn builds
    // it once where nothing changed between the checks that read it and the answer.
    let mut latest_graph: Option<SceneGraph> = None;
    let mut counted = counted_classes(&in_force);
    let mut caps = capped_classes(&in_force);
    if !request.confirm_safety {
        // Joining two people (or pets) into one is a change to a safety-critical class: it waits for
        // confirmation, and the count is reported unmet meanwhile.
        caps.retain(|cap| !taxonomy.class(cap.class).is_some_and(|info| info.safety));
    }
    if !caps.is_empty() {
        // A count below what the labels show: parts are joined when the graph is formed; what is still too
        // many loses its label and the scene is solved again around it (`crate::scenegraph::capped`).
        let graph = graph_of(request, &built.hypotheses, &solution, (&counted, &caps));
        let surplus = surplus_factors(scene, &graph, &caps, &before_state.labels);
        latest_graph = Some(graph);
        if !surplus.is_empty() {
            latest_graph = None;
            let touched = factor_segments(&surplus);
            built.energy.unary_factors.extend(surplus);
            let start = step_start(&solution, request.options);
            solution = solve_step(&built.energy, Some(&start), Some(touched), request.options)?;
        }
    }
    // Put back what moved between labels no note concerns and what a count asking for fewer took from outside
    // its class's span (`crate::scenegraph::locality`), and solve once more. A room type stated in the turn
    // concerns every class, but a count in force still never grows its class outward.
    let shrinking: Vec<(u16, u32)> = caps.iter().map(|cap| (cap.class.0, cap.most)).collect();
    let turn_concern = Concern::of_turn(
        request.constraints,
        &in_force,
        offset,
        &built.hypotheses,
        request.unaries.class_count(),
        scene.segment_count(),
    );
    let (concern, room_turn) = match turn_concern {
        Some(concern) => (concern, false),
        None => (
            Concern::nothing(request.unaries.class_count(), scene.segment_count()),
            true,
        ),
    };
    let mut strays = if room_turn {
        Vec::new()
    } else {
        stray_factors(&concern, &before_state.labels, &solution.state.labels)
    };
    strays.extend(overreach_factors(
        &concern,
        scene,
        &shrinking,
        &before_state.labels,
        &solution.state.labels,
    ));
    if !strays.is_empty() {
        latest_graph = None;
        let touched = factor_segments(&strays);
        built.energy.unary_factors.extend(strays);
        let start = step_start(&solution, request.options);
        solution = solve_step(&built.energy, Some(&start), Some(touched), request.options)?;
    }
    // Pieces the turn handed to classes no note concerns do not stand as objects of their own
    // (`crate::scenegraph::leftovers`).
    let fine = scene.segment_count();
    let moved = before_state.labels.get(..fine) != solution.state.labels.get(..fine);
    if !room_turn && moved {
        let graph = graph_of(request, &built.hypotheses, &solution, (&counted, &caps));
        let leftovers = leftover_factors(
            scene,
            &graph,
            &concern,
            &before_state.labels,
            &built.energy.unary_factors,
        );
        if leftovers.is_empty() {
            latest_graph = Some(graph);
        } else {
            latest_graph = None;
            let touched = factor_segments(&leftovers);
            built.energy.unary_factors.extend(leftovers);
            let start = step_start(&solution, request.options);
            solution = solve_step(&built.energy, Some(&start), Some(touched), request.options)?;
        }
    }
    // A count or presence of this turn the picture still does not show is withdrawn: the turn is solved again
    // without its factors, so a note that cannot be met moves nothing (it is reported unmet below).
    let withdrawn = unmet_counts(
        request,
        &built.hypotheses,
        &solution,
        &in_force,
        offset,
        (&counted, &caps),
        &mut latest_graph,
    );
    // Withdrawn constraints leave the constraints in force: they neither join parts nor come back next turn.
    let mut withdrawn_counts: Vec<GroundedConstraint> = Vec::new();
    if !withdrawn.is_empty() {
        latest_graph = None;
        let gone = |source: Option<usize>| source.is_some_and(|s| withdrawn.contains(&s));
        built.energy.count_factors.retain(|f| !gone(f.source));
        built.energy.unary_factors.retain(|f| !gone(f.source));
        built.energy.tuple_factors.retain(|f| !gone(f.source));
        // From the parent version again: what the turn still changes is within what it changed.
        solution = solve_step(&built.energy, warm.as_ref(), seeds, request.options)?;
        withdrawn_counts = in_force
            .iter()
            .filter(|g| withdrawn.contains(&g.constraint))
            .cloned()
            .collect();
        in_force.retain(|g| !withdrawn.contains(&g.constraint));
        counted = counted_classes(&in_force);
        caps.retain(|cap| !withdrawn.contains(&cap.source));
    }
    let mut changes = list_changes(
        &built.energy,
        taxonomy,
        &labels,
        &fallback,
        &before_state,
        &before_hypotheses,
        &solution.state,
        &built.hypotheses,
    );
    let mut energy = built.energy.clone();
    let mut held_sources: Vec<usize> = Vec::new();
    if !request.confirm_safety && changes.iter().any(|c| c.status == ChangeStatus::Pending) {
        // Hold the safety-critical parts where they were, and solve again around them without the
        // constraints that asked for the held changes (they wait for confirmation, reported as pending).
        held_sources = changes
            .iter()
            .filter(|c| c.status == ChangeStatus::Pending)
            .flat_map(|c| c.causes.iter().map(|cause| cause.constraint))
            .collect();
        held_sources.sort_unstable();
        held_sources.dedup();
        let held =
            |source: Option<usize>| source.is_some_and(|s| held_sources.binary_search(&s).is_ok());
        for factor in &mut energy.count_factors {
            if held(factor.source) {
                factor.weight = 0.0;
            }
        }
        for factor in &mut energy.absent_factors {
            if held(factor.source) {
                factor.weight = 0.0;
            }
        }
        for factor in &mut energy.tuple_factors {
            if held(factor.source) {
                factor.weight = 0.0;
            }
        }
        for factor in &mut energy.unary_factors {
            if held(factor.source) {
                factor.weight = 0.0;
            }
        }
        for change in changes.iter().filter(|c| c.status == ChangeStatus::Pending) {
            match change.kind {
                ChangeKind::SegmentRelabelled { segment, from, .. } => {
                    energy.unary_factors.push(UnaryFactor {
                        segments: vec![segment.0],
                        label: from.0,
                        wanted: true,
                        weight: HARD_WEIGHT,
                        source: None,
                    })
                }
                ChangeKind::ObjectRemoved { hypothesis, .. } => {
                    if let Some(index) = built.hypotheses.iter().position(|h| h.id == hypothesis) {
                        energy.tuple_factors.push(TupleFactor {
                            tuples: vec![vec![index as u32]],
                            negated: false,
                            weight: HARD_WEIGHT,
                            source: None,
                        });
                    }
                }
                _ => {}
            }
        }
        let start = step_start(&solution, request.options);
        latest_graph = None;
        let touched = touched_nodes(&built.energy, &energy, &solution.state.labels);
        solution = solve_step(&energy, Some(&start), touched, request.options)?;
        let applied = list_changes(
            &energy,
            taxonomy,
            &labels,
            &fallback,
            &before_state,
            &before_hypotheses,
            &solution.state,
            &built.hypotheses,
        );
        let pending: Vec<Change> = changes
            .into_iter()
            .filter(|c| c.status == ChangeStatus::Pending)
            .collect();
        let mut merged: Vec<Change> = applied
            .into_iter()
            .filter(|c| !pending.iter().any(|p| p.kind == c.kind))
            .collect();
        merged.extend(pending);
        changes = merged;
    } else {
        for change in &mut changes {
            change.status = ChangeStatus::Applied;
        }
    }

    let mut unmet = unmet_constraints(&energy, taxonomy, &labels, &solution.state);
    unmet.retain(|u| held_sources.binary_search(&u.constraint).is_err());
    for grounded in &in_force {
        if let GroundedKind::Room { room } = grounded.kind {
            if solution.state.room != room.0
                && !unmet.iter().any(|u| u.constraint == grounded.constraint)
            {
                unmet.push(Unmet {
                    constraint: grounded.constraint,
                    span: grounded.span,
                    contradictory: grounded.hard,
                    reason: "the rest of the picture points to another room type".to_string(),
                });
            }
        }
    }
    for problem in &built.unmet {
        if !unmet.iter().any(|u| u.constraint == problem.constraint) {
            unmet.push(Unmet {
                constraint: problem.constraint,
                span: labels
                    .get(problem.constraint)
                    .map(|l| l.0)
                    .unwrap_or_default(),
                contradictory: false,
                reason: problem.reason.clone(),
            });
        }
    }
    unmet.sort_by_key(|u| u.constraint);
    // Every solve of the turn left its bound as the dual loop had it; the answer's is tightened once here,
    // beside the answer's scene graph when that is still to build (`tighten_beside_graph`).
    let earlier = request.previous.and_then(|p| p.bound_memo.as_ref());
    let (mut graph, bound_memo) = match latest_graph {
        Some(graph) => {
            let memo = tighten_bound_reusing(&energy, &mut solution, request.options, earlier)?;
            (graph, memo)
        }
        None => {
            let (tightened, graph, memo) =
                tighten_beside_graph(&energy, &solution, request.options, earlier, |solved| {
                    graph_of(request, &built.hypotheses, solved, (&counted, &caps))
                })?;
            solution = tightened;
            (graph, memo)
        }
    };
    graph.energy = solution.energy;
    graph.lower_bound = solution.lower_bound;
    graph.relative_gap = solution.relative_gap;
    let mut surplus_questions: Vec<ClarifyingQuestion> = Vec::new();
    // A count the energy meets with a hypothesis switched on but not drawn is not met in the picture the
    // operator gets back: the scene graph's objects decide.
    for grounded in in_force.iter().chain(&withdrawn_counts) {
        let (class, count) = match grounded.kind {
            GroundedKind::Present { class } => (class, Count::AtLeast(1)),
            GroundedKind::Count { class, count } => (class, count),
            _ => continue,
        };
        if held_sources.binary_search(&grounded.constraint).is_ok()
            || unmet.iter().any(|u| u.constraint == grounded.constraint)
        {
            continue;
        }
        let shown = graph.objects.iter().filter(|o| o.class == class).count();
        if count_violation(count, shown as u32) > 0 {
            // Too many still shown: ask which are not of the class, with every candidate named.
            if let Count::Exactly(most) | Count::AtMost(most) = count {
                let cap = Cap {
                    class,
                    most,
                    source: grounded.constraint,
                };
                surplus_questions.extend(surplus_question(
                    scene,
                    taxonomy,
                    &graph,
                    &cap,
                    grounded.constraint,
                ));
            }
            unmet.push(Unmet {
                constraint: grounded.constraint,
                span: grounded.span,
                contradictory: grounded.hard,
                reason: format!(
                    "the corrected picture shows {}",
                    how_many(shown, taxonomy.class_name(class))
                ),
            });
        }
    }
    unmet.sort_by_key(|u| u.constraint);
    let where_questions = where_questions(
        request,
        &graph,
        &energy,
        in_force.iter().chain(&withdrawn_counts),
        offset,
        &unmet,
        &grounding.issues,
    );
    // A placement of this turn that nothing in the picture can take leaves the constraints in force with its
    // question: the answer (pointing at the thing and naming it) is a new note, beside which the old relation
    // would stay unmet for good (its subject is grounded to the objects there were).
    in_force.retain(|grounded| {
        let relation = matches!(grounded.kind, GroundedKind::Relation { negated: false, .. });
        !(relation
            && grounded.constraint >= offset
            && energy
                .tuple_factors
                .iter()
                .any(|f| f.source == Some(grounded.constraint) && f.tuples.is_empty()))
    });
    Ok(Correction {
        graph,
        changes,
        unmet,
        // Numbered like the constraints in force, as unmet entries and causes are.
        questions: grounding
            .questions
            .into_iter()
            .map(|mut question| {
                question.constraint += offset;
                question
            })
            .chain(surplus_questions)
            .chain(where_questions)
            .collect(),
        issues: grounding
            .issues
            .into_iter()
            .map(|issue| issue.shifted(offset))
            .collect(),
        hypotheses: built.hypotheses,
        solution,
        last_referent: grounding.last_referent,
        grounded: in_force,
        constraint_labels: labels,
        bound_memo: bound_memo.or_else(|| earlier.cloned()),
    })
}

/// The questions for this turn's constraints (index `first` on) that nothing in the picture can stand for:
/// a presence or a count asking for more that the graph still falls short of, and a placement no object can
/// take (its relation factor has no tuple to accept). Each asks the operator to point at the thing.
fn where_questions<'a>(
    request: &SolveRequest,
    graph: &SceneGraph,
    energy: &crate::energy::JointEnergy,
    in_force: impl Iterator<Item = &'a GroundedConstraint>,
    first: usize,
    unmet: &[Unmet],
    issues: &[GroundingIssue],
) -> Vec<ClarifyingQuestion> {
    let mut questions = Vec::new();
    let shown = |class: ClassId| graph.objects.iter().filter(|o| o.class == class).count();
    let place_of =
        |landmarks: &[crate::language::constraint::Referent], relation: Relation| match landmarks {
            [one] => one.class.map(|landmark| (relation, landmark)),
            _ => None,
        };
    // A placement whose subject nothing in view could stand for at all was not grounded (`NoCandidate`).
    for (index, said) in request.constraints.iter().enumerate() {
        let ConstraintKind::Relation {
            subject,
            relation,
            negated: false,
            landmarks,
        } = &said.kind
        else {
            continue;
        };
        let missing = issues.iter().any(|issue| {
            matches!(issue, GroundingIssue::NoCandidate { constraint, .. } if *constraint == index)
        });
        if let (true, Some(class)) = (missing, subject.class) {
            if shown(class) == 0 {
                questions.push(where_question(
                    request.taxonomy,
                    index + first,
                    class,
                    place_of(landmarks, *relation),
                    0,
                ));
            }
        }
    }
    for grounded in in_force.filter(|g| g.constraint >= first) {
        if !unmet.iter().any(|u| u.constraint == grounded.constraint) {
            continue;
        }
        let asked = match &grounded.kind {
            GroundedKind::Present { class } => (shown(*class) == 0).then_some((*class, None, 0)),
            GroundedKind::Count {
                class,
                count: Count::Exactly(k) | Count::AtLeast(k),
            } => (shown(*class) < *k as usize).then_some((*class, None, shown(*class))),
            GroundedKind::Relation {
                negated: false,
                relation,
                landmarks,
                ..
            } => {
                let unplaceable = energy
                    .tuple_factors
                    .iter()
                    .any(|f| f.source == Some(grounded.constraint) && f.tuples.is_empty());
                let said = request.constraints.get(grounded.constraint - first);
                match (unplaceable, said.map(|c| &c.kind)) {
                    (
                        true,
                        Some(ConstraintKind::Relation {
                            subject,
                            landmarks: said_landmarks,
                            ..
                        }),
                    ) => subject.class.map(|class| {
                        let place = match landmarks.as_slice() {
                            [_] => place_of(said_landmarks, *relation),
                            _ => None,
                        };
                        (class, place, 0)
                    }),
                    _ => None,
                }
            }
            _ => None,
        };
        if let Some((class, place, shown)) = asked {
            questions.push(where_question(
                request.taxonomy,
                grounded.constraint,
                class,
                place,
                shown,
            ));
        }
    }
    questions
}

/// The counts and presences of this turn (constraint index `first` on) that the scene graph of `solution`
/// does not show. `graph` holds that scene graph when the caller has it; when it is built here it is left
/// there for the caller.
fn unmet_counts(
    request: &SolveRequest,
    hypotheses: &[Hypothesis],
    solution: &JointSolution,
    in_force: &[GroundedConstraint],
    first: usize,
    (counted, caps): (&[(ClassId, u32)], &[Cap]),
    graph: &mut Option<SceneGraph>,
) -> Vec<usize> {
    let asks: Vec<(usize, ClassId, Count)> = in_force
        .iter()
        .filter(|grounded| grounded.constraint >= first)
        .filter_map(|grounded| match grounded.kind {
            GroundedKind::Present { class } => {
                Some((grounded.constraint, class, Count::AtLeast(1)))
            }
            GroundedKind::Count { class, count } => Some((grounded.constraint, class, count)),
            _ => None,
        })
        .collect();
    if asks.is_empty() {
        return Vec::new();
    }
    let graph =
        graph.get_or_insert_with(|| graph_of(request, hypotheses, solution, (counted, caps)));
    asks.into_iter()
        .filter(|&(_, class, count)| {
            let shown = graph.objects.iter().filter(|o| o.class == class).count();
            count_violation(count, shown as u32) > 0
        })
        .map(|(constraint, _, _)| constraint)
        .collect()
}

/// Tightens `solution`'s bound (`tighten_bound_reusing` with `earlier`) while `graph` builds the answer's
/// scene graph, on two threads when the machine has two cores and a thread starts, else one after the
/// other. The graph reads the solution's state alone (its figures are set from the tightened solution
/// afterwards) and the tightening reads the energy and the solution's multipliers alone, so either order
/// gives the same answer.
fn tighten_beside_graph(
    energy: &JointEnergy,
    solution: &JointSolution,
    options: &JointOptions,
    earlier: Option<&BoundMemo>,
    graph: impl FnOnce(&JointSolution) -> SceneGraph,
) -> Result<(JointSolution, SceneGraph, Option<BoundMemo>), CorrectionError> {
    let tighten = || {
        let mut tightened = solution.clone();
        tighten_bound_reusing(energy, &mut tightened, options, earlier)
            .map(|memo| (tightened, memo))
    };
    let two_cores = std::thread::available_parallelism().is_ok_and(|cores| cores.get() >= 2);
    let (graph, bound) = std::thread::scope(|scope| {
        let worker = two_cores
            .then(|| {
                std::thread::Builder::new()
                    .name("sayso-bound".into())
                    .spawn_scoped(scope, tighten)
                    .ok()
            })
            .flatten();
        let graph = graph(solution);
        (graph, worker.and_then(|worker| worker.join().ok()))
    });
    // No second thread (or it ended without an answer): tighten here.
    let (tightened, memo) = match bound {
        Some(result) => result?,
        None => tighten()?,
    };
    Ok((tightened, graph, memo))
}

/// The scene graph of a solved state, with the counts and caps in force.
fn graph_of(
    request: &SolveRequest,
    hypotheses: &[Hypothesis],
    solution: &JointSolution,
    (counted, caps): (&[(ClassId, u32)], &[Cap]),
) -> SceneGraph {
    build_scene_graph(
        request.scene,
        request.taxonomy,
        hypotheses,
        &solution.state,
        SolvedFigures {
            energy: solution.energy,
            lower_bound: solution.lower_bound,
            relative_gap: solution.relative_gap,
            counted,
            capped: caps,
            earlier: request.previous.map(|previous| &previous.graph),
        },
        request.instance_cuts,
    )
}

fn energy_inputs<'a>(
    request: &'a SolveRequest,
    hypotheses: &'a [Hypothesis],
    accepted: &'a [bool],
    grounded: &'a [GroundedConstraint],
) -> EnergyInputs<'a> {
    EnergyInputs {
        scene: request.scene,
        unaries: request.unaries,
        taxonomy: request.taxonomy,
        hypotheses,
        accepted,
        grounded,
        prior: request.prior,
        weights: request.weights,
    }
}

/// The classes a turn's constraints ask to be in view (present, a count above zero, either end of a
/// relation, a place's subject, a relabel's new class, an attribute's target): where proposals widen.
fn named_classes(constraints: &[Constraint]) -> Vec<ClassId> {
    let mut classes = Vec::new();
    for constraint in constraints {
        match &constraint.kind {
            ConstraintKind::Present { class } => classes.push(*class),
            ConstraintKind::Count { class, count } => {
                if matches!(count, Count::Exactly(k) | Count::AtLeast(k) if *k > 0) {
                    classes.push(*class);
                }
            }
            ConstraintKind::Relation {
                subject,
                negated,
                landmarks,
                ..
            } => {
                if !negated {
                    classes.extend(subject.class);
                }
                classes.extend(landmarks.iter().filter_map(|landmark| landmark.class));
            }
            ConstraintKind::Place { subject, .. } => classes.extend(subject.class),
            ConstraintKind::Relabel { to, .. } => classes.extend(*to),
            ConstraintKind::Attribute { target, .. } => classes.extend(target.class),
            ConstraintKind::Absent { .. } | ConstraintKind::RoomType { .. } => {}
        }
    }
    classes.sort();
    classes.dedup();
    classes
}

/// The placements a turn states: a subject class in a relation (not negated) to one landmark class.
fn placements(constraints: &[Constraint]) -> Vec<(RelatedAsk, Relation)> {
    let mut asks = Vec::new();
    for constraint in constraints {
        if let ConstraintKind::Relation {
            subject,
            relation,
            negated: false,
            landmarks,
        } = &constraint.kind
        {
            if let (Some(subject), [landmark]) = (subject.class, landmarks.as_slice()) {
                if let Some(landmark) = landmark.class {
                    asks.push((RelatedAsk { subject, landmark }, *relation));
                }
            }
        }
    }
    asks
}

fn baseline(
    inputs: &EnergyInputs,
    options: &JointOptions,
) -> Result<(JointState, Vec<Hypothesis>, Option<WarmStart>), CorrectionError> {
    let built = build_energy(inputs)?;
    let solution = solve_joint_loose(&built.energy, None, options)?;
    let warm = WarmStart {
        state: solution.state.clone(),
        multipliers: Some(solution.multipliers.clone()),
    };
    Ok((solution.state, built.hypotheses, Some(warm)))
}

/// The classes a count in force caps (exactly or at most `k`, `k >= 1`), the latest statement about a class
/// winning: where the scene graph joins parts and the correction takes surplus objects away.
pub fn capped_classes(in_force: &[GroundedConstraint]) -> Vec<Cap> {
    let mut caps: Vec<Cap> = Vec::new();
    for grounded in in_force.iter().rev() {
        if let GroundedKind::Count { class, count } = grounded.kind {
            if caps.iter().any(|cap| cap.class == class) {
                continue;
            }
            // Only the latest statement about the class counts, capped or not.
            caps.push(Cap {
                class,
                most: match count {
                    Count::Exactly(k) | Count::AtMost(k) => k,
                    Count::AtLeast(_) => u32::MAX,
                },
                source: grounded.constraint,
            });
        }
    }
    caps.retain(|cap| cap.most >= 1 && cap.most != u32::MAX);
    caps.reverse();
    caps
}

/// The classes a count in force asks at least some number of objects of (exactly or at least `k`), the latest
/// statement about a class winning: what the scene graph's count split reads.
pub fn counted_classes(in_force: &[GroundedConstraint]) -> Vec<(ClassId, u32)> {
    let mut counted: Vec<(ClassId, u32)> = in_force
        .iter()
        .filter_map(|grounded| match grounded.kind {
            GroundedKind::Count {
                class,
                count: Count::Exactly(k) | Count::AtLeast(k),
            } => Some((class, k)),
            _ => None,
        })
        .collect();
    // The latest statement about a class wins (earlier ones are retired when superseded; keep the last).
    counted.reverse();
    let mut seen_classes = Vec::new();
    counted.retain(|(class, _)| {
        let first = !seen_classes.contains(class);
        seen_classes.push(*class);
        first
    });
    counted
}
