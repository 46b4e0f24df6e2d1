"""Results corrected after their lot was released: proposed by an analyst, applied by QA with a
signature (the certificate is reissued), or declined."""
from __future__ import annotations

import django_filters as filters
from drf_spectacular.utils import extend_schema, extend_schema_view
from rest_framework import status
from rest_framework.generics import RetrieveAPIView
from rest_framework.permissions import IsAuthenticated
from rest_framework.request import Request
from rest_framework.response import Response
from rest_framework.views import APIView

from analyses.api.permissions import NotQAReviewer, requires
from analyses.api.schema import errors
from analyses.api.serializers.common import ReasonSerializer
from analyses.api.serializers.post_release import (
    PostReleaseCorrectionApproveSerializer,
    PostReleaseCorrectionProposeSerializer,
    PostReleaseCorrectionSerializer,
)
from analyses.api.views.common import PagedListView, validated
from analyses.models import CorrectionState, Lot, PostReleaseCorrection
from analyses.selectors.post_release import post_release_correction_list
from analyses.services.post_release_corrections import (
    post_release_correction_approve,
    post_release_correction_decline,
    post_release_correction_propose,
)

QA_DECIDES = requires("release_lot", "approve or decline result corrections after release")


class PostReleaseCorrectionFilter(filters.FilterSet):
    state = filters.ChoiceFilter(choices=CorrectionState.choices)
    lot = filters.ModelChoiceFilter(queryset=lambda request: Lot.objects.all())

    class Meta:
        model = PostReleaseCorrection
        fields = ["state", "lot"]


class ResultPostReleaseCorrectionView(APIView):
    permission_classes = [IsAuthenticated, NotQAReviewer, requires("record_result", "correct results")]

    @extend_schema(
        request=PostReleaseCorrectionProposeSerializer,
        responses={201: PostReleaseCorrectionSerializer, **errors(400, 403, 404, 409)},
        summary="Propose the correction of a released lot's result (analyst), for QA to approve",
        description=(
            "For an accepted result of a released lot's routine or QC-check sample. The person who may correct the "
            "result before acceptance (the test's assignee; an admin) enters the corrected raw inputs and the reason; "
            "a QA reviewer never enters raw data (403). Nothing on the released record changes yet: the answer shows "
            "what the replicate, the test's result and its verdict would become. QA then approves it (the result "
            "gets a new version and the certificate is reissued) or declines it. The correction keeps the titrant "
            "lot and instruments the result was measured with. 409 when the lot is not released, the result is not "
            "current, its test is not accepted, or a correction of it already awaits QA."
        ),
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(PostReleaseCorrectionProposeSerializer, request)
        proposal = post_release_correction_propose(request.user, pk, inputs=data["inputs"], reason=data["reason"])
        return Response(PostReleaseCorrectionSerializer(proposal).data, status=status.HTTP_201_CREATED)


@extend_schema_view(
    get=extend_schema(
        summary="List result corrections after release",
        description="Proposed, applied and declined corrections of released lots' results, newest first; filter by state or lot.",
        responses={200: PostReleaseCorrectionSerializer(many=True), **errors(400)},
    )
)
class PostReleaseCorrectionListView(PagedListView):
    serializer_class = PostReleaseCorrectionSerializer
    filterset_class = PostReleaseCorrectionFilter

    def get_queryset(self):
        return post_release_correction_list()


@extend_schema_view(
    get=extend_schema(
        summary="One result correction after release",
        description="The corrected inputs, what they give, and QA's decision with the certificate it reissued.",
        responses={200: PostReleaseCorrectionSerializer, **errors(404)},
    )
)
class PostReleaseCorrectionDetailView(RetrieveAPIView):
    serializer_class = PostReleaseCorrectionSerializer

    def get_queryset(self):
        return post_release_correction_list()


class PostReleaseCorrectionApproveView(APIView):
    permission_classes = [IsAuthenticated, QA_DECIDES]

    @extend_schema(
        request=PostReleaseCorrectionApproveSerializer,
        responses={200: PostReleaseCorrectionSerializer, **errors(400, 403, 404, 409)},
        summary="Apply a proposed correction and reissue the certificate (QA), signed with the user's password",
        description=(
            "QA reviewers only (no superuser flag grants it), and never the person who entered the data. An "
            "electronic signature: `password` is the QA user's own, re-entered (400 naming `password` when missing or "
            "wrong; wrong ones count towards the login lock-out, then 429). In one step the result gets a new "
            "version (the released one is kept, superseded), the test's result, uncertainty and verdict are decided "
            "again by its line's decision rule, and the certificate is reissued as a new version with the reason "
            "\"result correction\", marked as replacing the current one, which stays retrievable. 409, with nothing "
            "changed, when the correction would put a release-critical result out of specification: the lot no "
            "longer conforms and its certificate cannot say it does (handle it as nonconforming work on a released "
            "lot); also when the proposal is closed or the result was corrected since."
        ),
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(PostReleaseCorrectionApproveSerializer, request)
        proposal = post_release_correction_approve(
            request.user, pk, password=data["password"], note=data["note"], request=request
        )
        return Response(PostReleaseCorrectionSerializer(proposal).data)


class PostReleaseCorrectionDeclineView(APIView):
    permission_classes = [IsAuthenticated, QA_DECIDES]

    @extend_schema(
        request=ReasonSerializer,
        responses={200: PostReleaseCorrectionSerializer, **errors(400, 403, 404, 409)},
        summary="Decline a proposed correction of a released lot's result (QA), with a reason",
        description=(
            "QA reviewers only. The proposal is closed and kept with its inputs; the released result and its "
            "certificate stay as they are. 409 when it is already applied or declined."
        ),
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(ReasonSerializer, request)
        return Response(PostReleaseCorrectionSerializer(post_release_correction_decline(request.user, pk, reason=data["reason"])).data)
