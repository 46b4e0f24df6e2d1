"""API tokens stored as hashes (django-rest-knox, issue 8) and login lock-outs.

The plain-text tokens of rest_framework.authtoken (app removed) are dropped: anyone who saw
one could use it for ever. Users obtain new tokens, which are shown once and expire."""

import django.db.models.deletion
from django.conf import settings
from django.db import migrations, models


class Migration(migrations.Migration):

    dependencies = [
        ('analyses', '0011_scope_basis_review_warnings'),
        migrations.swappable_dependency(settings.AUTH_USER_MODEL),
    ]

    operations = [
        migrations.RunSQL("DROP TABLE IF EXISTS authtoken_token", reverse_sql=migrations.RunSQL.noop),
        migrations.CreateModel(
            name='LoginLockout',
            fields=[
                ('id', models.BigAutoField(auto_created=True, primary_key=True, serialize=False, verbose_name='ID')),
                ('scope', models.CharField(choices=[('account', 'Account'), ('address', 'Client address')], max_length=16)),
                ('subject', models.CharField(max_length=150)),
                ('address', models.CharField(help_text='the client address of the failure that tripped the lock', max_length=64)),
                ('failures', models.PositiveIntegerField()),
                ('locked_at', models.DateTimeField()),
                ('locked_until', models.DateTimeField()),
            ],
            options={
                'ordering': ['-locked_at', '-id'],
            },
        ),
        migrations.CreateModel(
            name='ApiToken',
            fields=[
                ('token_key', models.CharField(db_index=True, max_length=25)),
                ('created', models.DateTimeField(auto_now_add=True)),
                ('expiry', models.DateTimeField(blank=True, null=True)),
                ('id', models.BigAutoField(primary_key=True, serialize=False)),
                ('digest', models.CharField(max_length=128, unique=True)),
                ('name', models.CharField(help_text='what the token is for, e.g. an instrument PC or an integration', max_length=80)),
                ('last_used_at', models.DateTimeField(blank=True, null=True)),
                ('user', models.ForeignKey(on_delete=django.db.models.deletion.CASCADE, related_name='auth_token_set', to=settings.AUTH_USER_MODEL)),
            ],
            options={
                'ordering': ['-created', '-id'],
                'constraints': [models.UniqueConstraint(fields=('user', 'name'), name='api_token_name_unique_per_user')],
            },
        ),
    ]
